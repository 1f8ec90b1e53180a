// Multistart basins modulo symmetries beyond permutations: the model's canonical form
// (sign and phase of an oscillation) and the same-curve fall-back (a peak parked outside
// the data, where its parameters no longer matter).
#include <catch2/catch.hpp>
#include <cmath>

#include "engine/model/families/oscillation_models.h"
#include "engine/model/families/peak_models.h"
#include "engine/multistart/internal/basin_clustering.h"
#include "engine/multistart/multistart.h"
#include "tests/engine/multistart_test_models.h"

namespace foothold {
namespace {

using testing::MakeProblem;
using testing::Vec;

constexpr double kPi = 3.14159265358979323846;
// Ring-down truth (amplitude, tau, frequency, phase, baseline).
const double kRingdown[5] = {40, 5, 0.85, 0.4, 1};
constexpr double kTruthTolerance = 0.05;

void CheckSameAcrossThreads(const Problem& problem, const std::vector<StartCandidate>& candidates,
                            MultistartOptions options, const MultistartSummary& reference) {
  options.num_threads = 1;
  const MultistartSummary serial = RunMultistart(problem, candidates, {}, options);
  REQUIRE(serial.starts.size() == reference.starts.size());
  REQUIRE(serial.basins.size() == reference.basins.size());
  for (size_t i = 0; i < serial.starts.size(); ++i) {
    CHECK(serial.starts[i].end == reference.starts[i].end);
    CHECK(serial.starts[i].basin == reference.starts[i].basin);
  }
  for (size_t b = 0; b < serial.basins.size(); ++b) {
    CHECK(serial.basins[b].parameters == reference.basins[b].parameters);
  }
}

TEST_CASE("Multistart: damped_sine optima (A, phi) and (-A, phi + pi) are one basin", "[engine]") {
  const DampedSineModel model;
  Problem problem = MakeProblem(
      model,
      [](double x) {
        return kRingdown[0] * std::exp(-x / kRingdown[1]) *
                   std::sin(2 * kPi * kRingdown[2] * x + kRingdown[3]) +
               kRingdown[4];
      },
      240, 0.0, 0.05, 0.3);
  const double inf = INFINITY;
  problem.lower = Vec({-inf, 1e-3, -inf, -inf, -inf});
  problem.upper = Vec({inf, inf, inf, inf, inf});
  // One guess written four ways: sign traded for a half period, a whole period added, and
  // the frequency negated.
  const std::vector<StartCandidate> candidates = {
      {"guess:periodogram", Vec({36, 4.5, 0.845, 0.3, 0.5})},
      {"guess:negated", Vec({-36, 4.5, 0.845, 0.3 + kPi, 0.5})},
      {"guess:next_period", Vec({36, 4.5, 0.845, 0.3 + 2 * kPi, 0.5})},
      {"guess:mirrored", Vec({-36, 4.5, -0.845, -0.3, 0.5})}};
  MultistartOptions options;
  options.max_starts = 4;  // the candidates only
  options.num_threads = 2;
  const MultistartSummary summary = RunMultistart(problem, candidates, {}, options);
  INFO(summary.FullReport());
  REQUIRE(summary.num_starts_run == 4);
  for (int s = 0; s < 4; ++s) REQUIRE(summary.starts[s].converged);
  // The raw end points keep their signs; the basin does not.
  CHECK(summary.starts[1].end[0] < 0);
  CHECK(summary.starts[2].end[3] > kPi);
  REQUIRE(summary.basins.size() == 1);
  CHECK(summary.basins[0].num_starts == 4);
  CHECK_FALSE(summary.ambiguous_basins);
  const Eigen::VectorXd& best = summary.basins[0].parameters;
  for (int j = 0; j < 5; ++j) CHECK(std::abs(best[j] - kRingdown[j]) < kTruthTolerance * 10);
  CHECK(best[0] > 0);
  CHECK(best[3] >= -kPi);
  CHECK(best[3] < kPi);
  CHECK(summary.basins[0].has_standard_errors);
  CheckSameAcrossThreads(problem, candidates, options, summary);
}

TEST_CASE("Multistart: a peak parked outside the data is one basin, not one per parking place",
          "[engine]") {
  const MultiGaussianModel model(2);
  Problem problem = MakeProblem(
      model, [](double x) { return 3 * std::exp(-0.5 * std::pow((x - 4) / 0.6, 2)) + 0.5; }, 200,
      0.0, 0.05, 0.01);
  const double inf = INFINITY;
  problem.lower = Vec({-inf, -60, 1e-3, -inf, -60, 1e-3, -inf});
  problem.upper = Vec({inf, 60, inf, inf, 60, inf, inf});
  // The real peak, and a second one started far outside [0, 10] in three places: its tail
  // does not reach the data, so the fit cannot move it and the curve is the one-peak fit.
  const std::vector<StartCandidate> candidates = {
      {"guess:peaks", Vec({2.8, 4.1, 0.5, 1.0, 40, 1.0, 0.4})},
      {"guess:parked_high", Vec({2.8, 4.1, 0.5, 5.0, 50, 2.0, 0.4})},
      {"guess:parked_low", Vec({2.8, 4.1, 0.5, 2.0, -30, 0.5, 0.4})}};
  MultistartOptions options;
  options.max_starts = 3;
  options.num_threads = 2;
  const MultistartSummary summary = RunMultistart(problem, candidates, {}, options);
  INFO(summary.FullReport());
  REQUIRE(summary.num_starts_run == 3);
  for (int s = 0; s < 3; ++s) REQUIRE(summary.starts[s].converged);
  // The parked peaks really end in three different places.
  CHECK(std::abs(summary.starts[0].end[4] - summary.starts[1].end[4]) > 5);
  REQUIRE(summary.basins.size() == 1);
  CHECK(summary.basins[0].num_starts == 3);
  CHECK_FALSE(summary.ambiguous_basins);
  CHECK_FALSE(summary.best_basin_single_start);
  CheckSameAcrossThreads(problem, candidates, options, summary);
}

TEST_CASE("SameCurve: equal cost and curves within a share of the noise scale", "[engine]") {
  internal::BasinTolerances tolerances;
  const int n = 100;
  internal::EndPoint a{0, 1.0, Vec({1.0})};  // noise scale sqrt(1/100) = 0.1
  internal::EndPoint b{1, 1.0, Vec({-7.0})};
  const Eigen::VectorXd curve = Eigen::VectorXd::LinSpaced(n, 0, 5);
  Eigen::VectorXd close = curve;
  close[17] += 0.5 * tolerances.curve_relative * 0.1;
  Eigen::VectorXd far = curve;
  far[17] += 2 * tolerances.curve_relative * 0.1;
  CHECK(internal::SameCurve(a, curve, b, close, tolerances));
  CHECK_FALSE(internal::SameCurve(a, curve, b, far, tolerances));
  CHECK_FALSE(internal::SameCurve(a, curve, b, Eigen::VectorXd(), tolerances));
  internal::EndPoint worse = b;
  worse.rss = 1.1;  // a cost gap beyond cost_relative
  CHECK_FALSE(internal::SameCurve(a, curve, worse, close, tolerances));
  tolerances.curve_relative = 0;
  CHECK_FALSE(internal::SameCurve(a, curve, b, close, tolerances));
}

}  // namespace
}  // namespace foothold
