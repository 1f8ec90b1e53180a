#include "engine/multistart/multistart.h"

#include <algorithm>
#include <chrono>
#include <cmath>
#include <limits>
#include <sstream>

#include "engine/multistart/internal/multistart_run.h"

namespace foothold {
namespace {

bool CheckCandidates(const Problem& problem, const std::vector<StartCandidate>& candidates,
                     std::ostringstream* message) {
  const int p = problem.NumParameters();
  for (size_t c = 0; c < candidates.size(); ++c) {
    const StartCandidate& candidate = candidates[c];
    if (candidate.origin.empty()) {
      *message << "candidates[" << c << "].origin is empty: must name where the start came "
               << "from (\"user\", \"guess:<name>\")";
      return false;
    }
    if (candidate.parameters.size() != p) {
      *message << "candidates[" << c << "] (" << candidate.origin << ").parameters has size "
               << candidate.parameters.size() << ": must have the model's " << p << " parameters";
      return false;
    }
    for (int j = 0; j < p; ++j) {
      if (!std::isfinite(candidate.parameters[j])) {
        *message << "candidates[" << c << "] (" << candidate.origin << ").parameters[" << j
                 << "] = " << candidate.parameters[j] << ": must be finite";
        return false;
      }
    }
  }
  if (candidates.empty()) {
    for (int j = 0; j < p; ++j) {
      if (problem.IsFixed(j)) {
        *message << "parameter " << j << " is fixed but no candidate gives its value: "
                 << "at least one candidate is needed";
        return false;
      }
    }
  }
  return true;
}

bool CheckBox(const Problem& problem, const std::vector<StartCandidate>& candidates,
              const SearchBox& box, std::ostringstream* message) {
  const Eigen::Index p = problem.NumParameters();
  if (box.lower.size() != 0 && box.lower.size() != p) {
    *message << "box.lower has size " << box.lower.size() << ": must be 0 or " << p;
    return false;
  }
  if (box.upper.size() != 0 && box.upper.size() != p) {
    *message << "box.upper has size " << box.upper.size() << ": must be 0 or " << p;
    return false;
  }
  if (!box.scale.empty() && static_cast<Eigen::Index>(box.scale.size()) != p) {
    *message << "box.scale has size " << box.scale.size() << ": must be 0 or " << p;
    return false;
  }
  for (Eigen::Index j = 0; j < p; ++j) {
    const double lower = box.lower.size() ? box.lower[j] : -INFINITY;
    const double upper = box.upper.size() ? box.upper[j] : INFINITY;
    if (std::isnan(lower) || std::isnan(upper) || lower > upper) {
      *message << "box.lower[" << j << "] = " << lower << ", box.upper[" << j << "] = " << upper
               << ": must be numbers with lower <= upper";
      return false;
    }
  }
  const internal::ResolvedBox resolved = internal::ResolveBox(problem, candidates, box);
  for (int j : resolved.free) {
    if (!box.scale.empty() && box.scale[j] == BoxScale::kLog && !(resolved.lower[j] > 0)) {
      *message << "box.scale[" << j << "] = log but the sampled range starts at "
               << resolved.lower[j] << ": a log scale needs a lower end > 0";
      return false;
    }
    if (resolved.lower[j] > resolved.upper[j]) {
      *message << "parameter " << j << ": box [" << (box.lower.size() ? box.lower[j] : -INFINITY)
               << ", " << (box.upper.size() ? box.upper[j] : INFINITY)
               << "] does not meet the problem's bounds [" << problem.Lower(j) << ", "
               << problem.Upper(j) << "]";
      return false;
    }
  }
  return true;
}

}  // namespace

bool ValidateMultistartInput(const Problem& problem, const std::vector<StartCandidate>& candidates,
                             const SearchBox& box, const MultistartOptions& options,
                             std::string* error) {
  std::string nested;
  std::ostringstream message;
  if (!problem.Validate(&nested)) {
    message << "problem: " << nested;
  } else if (problem.NumFree() > internal::SobolSequence::kMaxDimension) {
    message << "problem has " << problem.NumFree() << " free parameters: multistart supports "
            << "at most " << internal::SobolSequence::kMaxDimension;
  } else if (!options.Validate(&nested)) {
    message << "options." << nested;
  } else if (CheckCandidates(problem, candidates, &message)) {
    CheckBox(problem, candidates, box, &message);
  }
  if (message.tellp() == 0) return true;
  if (error) *error = message.str();
  return false;
}

MultistartSummary RunMultistart(const Problem& problem,
                                const std::vector<StartCandidate>& candidates, const SearchBox& box,
                                const MultistartOptions& options) {
  const auto started = std::chrono::steady_clock::now();
  std::string error;
  if (!ValidateMultistartInput(problem, candidates, box, options, &error)) {
    MultistartSummary summary;
    summary.stop = MultistartStop::kInvalidInput;
    summary.message = error;
    summary.seed = options.seed;
    summary.num_candidates = static_cast<int>(candidates.size());
    return summary;
  }
  internal::MultistartRun run(problem, candidates, box, options, started);
  return run.Execute();
}

MultistartSummary RunMultistart(const Problem& problem, const StartSource& source,
                                const MultistartOptions& options) {
  return RunMultistart(problem, source.Candidates(problem), source.Box(problem), options);
}

}  // namespace foothold
