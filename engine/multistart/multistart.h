#pragma once
// The multistart driver: many seeded local fits on a thread pool, clustered into basins.
//
//   MultistartOptions options;
//   options.seed = 7;
//   MultistartSummary summary = RunMultistart(problem, candidates, SearchBox{}, options);
//   const Basin& best = summary.basins.front();
//
// The schedule (docs/multistart.md): every seeded candidate, clamped into the bounds; then
// rounds of Sobol points in the (partly logarithmic) search box and jitter around the best
// basins so far. The same inputs and seed give the same summary, timings aside, whatever
// num_threads; only a deadline or a cancellation can make two runs differ.

#include <string>
#include <vector>

#include "engine/multistart/multistart_options.h"
#include "engine/multistart/multistart_summary.h"
#include "engine/multistart/start_source.h"
#include "engine/solve/problem.h"

namespace foothold {

// Checks what RunMultistart needs: a valid problem with at most 64 free parameters, valid
// options, candidates of size p with finite values, a box whose given vectors have size p
// and lower <= upper, log scales only where the lower end is > 0, and at least one
// candidate when a parameter is fixed (its value comes from the first candidate). The
// message names the input, the index and the rule.
bool ValidateMultistartInput(const Problem& problem, const std::vector<StartCandidate>& candidates,
                             const SearchBox& box, const MultistartOptions& options,
                             std::string* error);

// Runs the schedule. Never throws for a numerical outcome: failed starts are records.
// Invalid input returns a summary with stop == kInvalidInput and the message, having run
// nothing. problem.model is used by the calling thread only (clustering, statistics);
// every fit, the calling thread's included, uses a Model::Clone().
MultistartSummary RunMultistart(const Problem& problem,
                                const std::vector<StartCandidate>& candidates, const SearchBox& box,
                                const MultistartOptions& options);

// The same with the candidates and box asked from `source` (called once each).
MultistartSummary RunMultistart(const Problem& problem, const StartSource& source,
                                const MultistartOptions& options);

}  // namespace foothold
