#pragma once
// The Bayesian stopping rule of Boender & Rinnooy Kan (1987), "Bayesian stopping rules for
// multistart global optimization methods", Mathematical Programming 37, 59-80.
//
// Model: the search region splits into k regions of attraction with relative sizes
// theta_1..theta_k; each local search from a uniform start lands in basin i with
// probability theta_i. Prior: k uniform on {1, 2, ...} and theta uniform on the simplex.
// After n searches that found w distinct minima the posterior of k is
//   P(k | n, w) ∝ k! (k - 1)! / ((k - w)! (n + k - 1)!),  k >= w,
// whose mean is w (n - 1) / (n - w - 2) (finite for n > w + 2), and the posterior mean of
// the total size of the unobserved regions is w (w + 1) / (n (n - 1)). The derivation is in
// docs/multistart.md; the closed forms are checked against the sum above in the tests.

namespace foothold {
namespace internal {

struct StoppingRuleEstimate {
  int num_searches = 0;                  // n
  int num_minima = 0;                    // w
  bool is_defined = false;               // n > w + 2 and w >= 1
  double expected_num_minima = 0;        // w (n - 1) / (n - w - 2), NaN when undefined
  double expected_unseen_minima = 0;     // expected_num_minima - w = w (w + 1) / (n - w - 2)
  double expected_unobserved_share = 0;  // w (w + 1) / (n (n - 1)), NaN when n < 2
};

StoppingRuleEstimate EstimateUnseenMinima(int num_searches, int num_minima);

// The rule: stop once the expected number of unseen minima is below `threshold`
// (never while the estimate is undefined).
bool ShouldStop(const StoppingRuleEstimate& estimate, double threshold);

// log P(k | n, w) up to a constant: log of k! (k-1)! / ((k-w)! (n+k-1)!). For the tests.
double LogPosteriorWeight(int k, int num_searches, int num_minima);

}  // namespace internal
}  // namespace foothold
