#pragma once
// The result document (DESIGN.md §3a) back to a FitOutcome, so that a client holding only
// the daemon's answer prints the same report as `foothold fit`. Only what the report and
// the exit status read is restored: names, values, errors, intervals, statistics, the
// search, basins, the start log's origins and the verdict; covariance, residuals and
// timings are not.

#include <string>

#include "server/fit_outcome.h"
#include "server/json_codec.h"

namespace foothold {

// False with a message naming the key ("result.best.parameters: expected an object").
bool DecodeFitOutcome(const Json& document, FitOutcome* out, std::string* error);

}  // namespace foothold
