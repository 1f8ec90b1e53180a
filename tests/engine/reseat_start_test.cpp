// Re-seat starts (engine/multistart/internal/reseat_start.h): one peak of the best fit so far
// moves onto the feature the fit leaves unexplained, and multistart plans such starts only
// for models whose permutation symmetry carries a location.
#include <catch2/catch.hpp>
#include <cmath>

#include "engine/model/families/peak_models.h"
#include "engine/multistart/internal/reseat_start.h"
#include "engine/multistart/multistart.h"
#include "tests/engine/multistart_test_models.h"

namespace foothold {
namespace {

using testing::Vec;

// Two gaussians at x = 3 and x = 7 (sigma 0.5, heights 2 and 1.5) on a baseline of 0.1.
Problem TwoPeakProblem(const Model& model) {
  Problem problem = testing::MakeProblem(
      model,
      [](double x) {
        return 2.0 * std::exp(-0.5 * std::pow((x - 3) / 0.5, 2)) +
               1.5 * std::exp(-0.5 * std::pow((x - 7) / 0.5, 2)) + 0.1;
      },
      201, 0.0, 0.05, 1e-3);
  problem.lower = Eigen::VectorXd::Constant(model.NumParameters(), -INFINITY);
  problem.upper = Eigen::VectorXd::Constant(model.NumParameters(), INFINITY);
  problem.lower[2] = problem.lower[5] = 1e-3;
  return problem;
}

}  // namespace

TEST_CASE("ReseatStart: a peak stacked on the first feature moves onto the second", "[engine]") {
  const MultiGaussianModel model(2);
  const Problem problem = TwoPeakProblem(model);
  PermutationSymmetry symmetry;
  REQUIRE(internal::FindReseatSymmetry(problem, &symmetry));
  CHECK(symmetry.location_position == 1);
  // Both peaks on the feature at 3 (heights sharing its 2.0): the one at 7 is unexplained.
  const Eigen::VectorXd stacked = Vec({1.0, 3.0, 0.5, 1.0, 3.0, 0.5, 0.1});
  const std::vector<StartCandidate> candidates = {{"user", stacked}};
  const internal::ResolvedBox box = internal::ResolveBox(problem, candidates, SearchBox{});
  int near_second = 0;
  constexpr int kDraws = 40;
  for (int draw = 0; draw < kDraws; ++draw) {
    internal::RandomStream stream(7, draw);
    const Eigen::VectorXd start =
        internal::ReseatStart(problem, model, box, symmetry, stacked, &stream);
    // Exactly one peak moved; its height and the baseline (linear) stay as they were.
    const bool first_moved = start[1] != 3.0;
    const bool second_moved = start[4] != 3.0;
    CHECK(first_moved != second_moved);
    const int moved = first_moved ? 0 : 1;
    const int kept = 1 - moved;
    CHECK(start[3 * kept + 1] == 3.0);
    CHECK(start[3 * kept + 2] == 0.5);
    CHECK(start[3 * moved] == 1.0);
    CHECK(start[6] == 0.1);
    if (std::abs(start[3 * moved + 1] - 7.0) < 1.0) ++near_second;
  }
  // The residual at 7 (1.5 high) dwarfs the one left at 3, whose squared smoothed value is
  // all the mass elsewhere gets: nearly every draw lands on the second feature.
  CHECK(near_second >= 0.9 * kDraws);
}

TEST_CASE("ReseatStart: no symmetry with a location, or a fixed location, means no re-seat",
          "[engine]") {
  const testing::PointwiseModel unlocated = testing::GaussianPeaksModel(2, true);
  Problem problem = TwoPeakProblem(unlocated);
  PermutationSymmetry symmetry;
  CHECK_FALSE(internal::FindReseatSymmetry(problem, &symmetry));

  const MultiGaussianModel model(2);
  problem = TwoPeakProblem(model);
  problem.is_fixed.assign(7, false);
  problem.is_fixed[4] = true;
  CHECK_FALSE(internal::FindReseatSymmetry(problem, &symmetry));
}

TEST_CASE("Multistart: peak sums get re-seat starts, the same with 1, 2 and 8 threads",
          "[engine]") {
  const MultiGaussianModel model(2);
  const Problem problem = TwoPeakProblem(model);
  const std::vector<StartCandidate> candidates = {
      {"guess:stacked", Vec({1.0, 3.0, 0.5, 1.0, 3.0, 0.5, 0.1})}};
  SearchBox box;
  box.lower = Vec({-3, 0, 0.05, -3, 0, 0.05, -1});
  box.upper = Vec({3, 10, 3, 3, 10, 3, 1});
  MultistartOptions options;
  options.max_starts = 24;
  options.round_size = 4;
  options.use_stopping_rule = false;
  options.num_threads = 1;
  const MultistartSummary one = RunMultistart(problem, candidates, box, options);
  int num_reseat = 0;
  for (const StartRecord& record : one.starts) num_reseat += record.origin == "reseat";
  // Generated ordinals 1, 5, 9, 13, 17, 21 (the jitter slots 3, 7, ... keep theirs); the
  // first round's slot comes before any basin exists and stays a Sobol point.
  CHECK(num_reseat >= 4);
  CHECK(num_reseat <= 6);
  // Both features found: the best basin puts one peak at 3 and one at 7.
  REQUIRE_FALSE(one.basins.empty());
  const Eigen::VectorXd& best = one.basins.front().parameters;
  CHECK(std::abs(std::min(best[1], best[4]) - 3.0) < 0.01);
  CHECK(std::abs(std::max(best[1], best[4]) - 7.0) < 0.01);
  for (int threads : {2, 8}) {
    options.num_threads = threads;
    const MultistartSummary other = RunMultistart(problem, candidates, box, options);
    REQUIRE(other.starts.size() == one.starts.size());
    for (size_t i = 0; i < one.starts.size(); ++i) {
      CHECK(other.starts[i].origin == one.starts[i].origin);
      CHECK(other.starts[i].start == one.starts[i].start);
      CHECK(other.starts[i].rss == one.starts[i].rss);
    }
  }
}

}  // namespace foothold
