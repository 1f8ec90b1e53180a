#pragma once
// The one place where JSON meets foothold's values: the request document (DESIGN.md §3b)
// to FitRequest, data columns to DataTable, FitOutcome to the result document (§3a) and
// the catalogue to its listing. Every decoding error names the field and index.

#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "server/data_table.h"
#include "server/fit_outcome.h"
#include "server/fit_request.h"

namespace foothold {

// Keys keep the order they are written in, so documents read like DESIGN.md shows them.
using Json = nlohmann::ordered_json;

// Parses JSON text; false with "invalid JSON: parse error at line 3, column 5: ..." (the
// message starts with `what`, e.g. "request").
bool ParseJsonText(const std::string& text, const std::string& what, Json* out, std::string* error);

// {"x": [...], "y": [...], ...}: every value an array of finite numbers, equal lengths.
// `field` prefixes messages ("data" gives "data.y[3]: expected a finite number, got
// \"NaN\"").
bool DecodeDataColumns(const Json& value, const std::string& field, DataTable* out,
                       std::string* error);

// The request document. Fields absent keep FitRequest's defaults; "data" may be absent
// (the CLI then supplies it). Unknown fields are errors, so a misspelt key is never ignored.
bool DecodeFitRequest(const Json& document, FitRequest* out, std::string* error);
bool DecodeFitRequestText(const std::string& text, FitRequest* out, std::string* error);

// The request as a document again (for storing a job); infinite bounds become null.
Json EncodeFitRequest(const FitRequest& request);

// The result document of DESIGN.md §3a plus foothold's extra keys (docs/result-document.md).
// Non-finite numbers become null.
Json EncodeFitOutcome(const FitOutcome& outcome);

struct ListedGuess;
// The seeded starts of `foothold guess`: {candidates: [{origin, rss, parameters}], guessed,
// warnings}.
Json EncodeGuessList(const std::vector<std::string>& parameter_names,
                     const std::vector<ListedGuess>& guesses,
                     const std::vector<std::string>& guessed,
                     const std::vector<std::string>& warnings);

// The catalogue: name, formula, summary, options and parameters with default bounds.
Json EncodeFamilies();

struct CandidateFit;
struct ModelComparison;
// The ranking of a comparison (server/model_comparison.h): {winner, margin_aicc, ranking:
// [{family, rank, free_parameters, rss, aicc, delta_aicc, akaike_weight, converged,
// termination, parameters}], nested: [{simpler, fuller, nesting, df_extra, df_residual, f,
// p_value, prefers_fuller, on_boundary}]}. `foothold compare --json` and the daemon share it.
Json EncodeComparison(const std::vector<CandidateFit>& fits, const ModelComparison& comparison);
// A comparison job's result: the winner's result document with "comparison" added.
Json EncodeComparisonResult(const std::vector<CandidateFit>& fits,
                            const ModelComparison& comparison);

}  // namespace foothold
