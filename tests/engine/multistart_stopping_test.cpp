// The Boender & Rinnooy Kan (1987) stopping rule: closed forms against the posterior, and
// its behaviour inside the driver.
#include <catch2/catch.hpp>
#include <cmath>

#include "engine/multistart/internal/stopping_rule.h"
#include "engine/multistart/multistart.h"
#include "tests/engine/multistart_test_models.h"

namespace foothold {
namespace {

using testing::MakeProblem;
using testing::Vec;

// Posterior sums are truncated at kPosteriorTerms values of k; the tail decays like
// k^(w - n + 1), negligible for the (n, w) pairs below.
constexpr int kPosteriorTerms = 200000;
constexpr double kClosedFormTolerance = 1e-7;

// E[k] and E[unobserved share] by summing the posterior P(k | n, w) directly. Given k, the
// sizes are Dirichlet(n_1 + 1, ..., n_w + 1, 1, ..., 1), so the unobserved share has mean
// (k - w) / (n + k).
void PosteriorMeans(int n, int w, double* expected_k, double* expected_share) {
  double max_log = -INFINITY;
  for (int k = w; k < w + kPosteriorTerms; ++k) {
    max_log = std::max(max_log, internal::LogPosteriorWeight(k, n, w));
  }
  double total = 0, k_sum = 0, share_sum = 0;
  for (int k = w; k < w + kPosteriorTerms; ++k) {
    const double weight = std::exp(internal::LogPosteriorWeight(k, n, w) - max_log);
    total += weight;
    k_sum += k * weight;
    share_sum += static_cast<double>(k - w) / (n + k) * weight;
  }
  *expected_k = k_sum / total;
  *expected_share = share_sum / total;
}

TEST_CASE("StoppingRule: closed forms equal the posterior means", "[engine]") {
  const int cases[][2] = {{10, 1}, {20, 3}, {30, 5}, {60, 12}};
  for (const auto& c : cases) {
    const int n = c[0], w = c[1];
    double expected_k = 0, expected_share = 0;
    PosteriorMeans(n, w, &expected_k, &expected_share);
    const internal::StoppingRuleEstimate estimate = internal::EstimateUnseenMinima(n, w);
    INFO("n = " << n << ", w = " << w);
    REQUIRE(estimate.is_defined);
    CHECK(estimate.expected_num_minima == Approx(expected_k).epsilon(kClosedFormTolerance));
    CHECK(estimate.expected_unseen_minima == Approx(expected_k - w).epsilon(kClosedFormTolerance));
    CHECK(estimate.expected_unobserved_share ==
          Approx(expected_share).epsilon(kClosedFormTolerance));
  }
}

TEST_CASE("StoppingRule: undefined until n > w + 2, then fires below the threshold", "[engine]") {
  CHECK_FALSE(internal::EstimateUnseenMinima(3, 1).is_defined);
  CHECK_FALSE(internal::ShouldStop(internal::EstimateUnseenMinima(3, 1), 0.5));
  // w = 1: unseen = 2 / (n - 3), below 0.5 from n = 8 on.
  CHECK_FALSE(internal::ShouldStop(internal::EstimateUnseenMinima(7, 1), 0.5));
  CHECK(internal::ShouldStop(internal::EstimateUnseenMinima(8, 1), 0.5));
  CHECK(internal::EstimateUnseenMinima(8, 1).expected_unseen_minima == Approx(0.4));
}

MultistartOptions RuleOptions() {
  MultistartOptions options;
  options.max_starts = 200;
  return options;
}

TEST_CASE("Multistart: the rule stops a one-basin problem long before a many-basin one",
          "[engine]") {
  const testing::SearchCase decay = testing::DecayCase();
  const MultistartSummary one_basin =
      RunMultistart(decay.problem, {{"user", Vec({2.0, 0.5})}}, decay.box, RuleOptions());
  INFO(one_basin.BriefReport());
  CHECK(one_basin.stop == MultistartStop::kStoppingRule);
  CHECK(one_basin.basins.size() == 1);
  CHECK(one_basin.expected_unseen_basins < RuleOptions().stopping_threshold);
  // Evaluated at round boundaries only.
  CHECK(one_basin.num_starts_run % RuleOptions().round_size == 0);
  CHECK(one_basin.message.find("expected unseen basins") == 0);

  const testing::SearchCase sine = testing::ManyBasinSineCase();
  const MultistartSummary many_basins =
      RunMultistart(sine.problem, {{"user", Vec({1.0, 0.4})}}, sine.box, RuleOptions());
  INFO(many_basins.BriefReport());
  CHECK(many_basins.basins.size() > 5);
  CHECK(one_basin.num_starts_run * 4 < many_basins.num_starts_run);
  CHECK(many_basins.num_starts_run <= many_basins.num_starts_planned);
}

TEST_CASE("Multistart: the round in flight when the rule fires never reaches the summary",
          "[engine]") {
  const testing::SearchCase decay = testing::DecayCase();
  const Problem& problem = decay.problem;
  const SearchBox& box = decay.box;
  for (int threads : {1, 2, 8}) {
    MultistartOptions options = RuleOptions();
    options.num_threads = threads;
    const MultistartSummary summary =
        RunMultistart(problem, {{"user", Vec({2.0, 0.5})}}, box, options);
    INFO(threads << " threads: " << summary.BriefReport());
    REQUIRE(summary.stop == MultistartStop::kStoppingRule);
    // Whole rounds only, in index order, none of them cancelled by the discard.
    CHECK(summary.num_starts_run == summary.num_rounds * options.round_size);
    REQUIRE(static_cast<int>(summary.starts.size()) == summary.num_starts_run);
    for (int i = 0; i < summary.num_starts_run; ++i) {
      CHECK(summary.starts[i].index == i);
      CHECK(summary.starts[i].termination != Termination::kCancelled);
    }
    // The estimate at the end is the one that stopped the run.
    CHECK(summary.expected_unseen_basins < options.stopping_threshold);
  }
}

TEST_CASE("Multistart: the rule never fires before every seeded candidate ran", "[engine]") {
  const testing::SearchCase decay = testing::DecayCase();
  const Problem& problem = decay.problem;
  const SearchBox& box = decay.box;
  // 30 candidates in rounds of 8: the rule could fire on Sobol starts of round 2 if it
  // ignored them; it must wait until round 4 ends.
  std::vector<StartCandidate> candidates;
  for (int c = 0; c < 30; ++c) {
    candidates.push_back({"guess:g" + std::to_string(c), Vec({1.0 + 0.1 * c, 0.2 + 0.05 * c})});
  }
  MultistartOptions options = RuleOptions();
  options.max_starts = 20;  // fewer than the candidates: every candidate still runs
  const MultistartSummary summary = RunMultistart(problem, candidates, box, options);
  INFO(summary.BriefReport());
  CHECK(summary.num_starts_planned == 30);
  REQUIRE(summary.num_starts_run == 30);
  for (int c = 0; c < 30; ++c) CHECK(summary.starts[c].origin == candidates[c].origin);
  CHECK(summary.stop == MultistartStop::kBudget);

  options.max_starts = 200;
  const MultistartSummary longer = RunMultistart(problem, candidates, box, options);
  INFO(longer.BriefReport());
  CHECK(longer.stop == MultistartStop::kStoppingRule);
  CHECK(longer.num_starts_run >= 30);
  // The rule counts only Sobol starts, so it needs at least 8 of them for one basin.
  CHECK(longer.rule_num_searches >= 8);
}

TEST_CASE("Multistart: with the rule off every planned start runs", "[engine]") {
  const testing::SearchCase decay = testing::DecayCase();
  const Problem& problem = decay.problem;
  MultistartOptions options = RuleOptions();
  options.max_starts = 50;
  options.use_stopping_rule = false;
  const MultistartSummary summary =
      RunMultistart(problem, {{"user", Vec({2.0, 0.5})}}, {}, options);
  CHECK(summary.stop == MultistartStop::kBudget);
  CHECK(summary.num_starts_run == 50);
  CHECK(summary.num_rounds == 7);
}

}  // namespace
}  // namespace foothold
