#pragma once
// The reference optimum of a corpus case, defined honestly: the best of the local fit started
// from the truth and of kPerturbedStarts fits started from the truth perturbed a little
// (each parameter moved by 2% of its value times a standard normal, then clamped into the
// bounds). For nearly merged peaks the fit from the truth is not always the global minimum,
// and a multistart that finds a lower one must not be counted as a miss.

#include <Eigen/Core>
#include <algorithm>
#include <cmath>
#include <limits>

#include "corpus.h"
#include "engine/solve/local_fit.h"
#include "engine/solve/problem.h"

namespace foothold {
namespace corpus {

constexpr int kPerturbedStarts = 8;
constexpr double kPerturbationShare = 0.02;

struct ReferenceOptimum {
  double rss = std::numeric_limits<double>::infinity();
  Eigen::VectorXd parameters;
  int best_start = -1;  // 0: the truth; k > 0: the k-th perturbed truth
  LocalFitSummary fit;  // the local fit that gave it
};

inline ReferenceOptimum FindReferenceOptimum(const Problem& problem, const Eigen::VectorXd& truth,
                                             const LocalFitOptions& options, uint64_t seed) {
  ReferenceOptimum reference;
  Random random(seed ^ 0x7265666572ULL);  // "refer"
  for (int k = 0; k <= kPerturbedStarts; ++k) {
    Eigen::VectorXd start = truth;
    for (Eigen::Index j = 0; j < start.size(); ++j) {
      if (k > 0) start[j] += kPerturbationShare * std::abs(truth[j]) * random.Normal();
      start[j] = std::min(problem.Upper(static_cast<int>(j)),
                          std::max(problem.Lower(static_cast<int>(j)), start[j]));
    }
    const LocalFitSummary fit = RunLocalFit(problem, start, options);
    if (std::isfinite(fit.final_cost) && fit.final_cost < reference.rss) {
      reference.rss = fit.final_cost;
      reference.parameters = fit.parameters;
      reference.best_start = k;
      reference.fit = fit;
    }
  }
  return reference;
}

}  // namespace corpus
}  // namespace foothold
