// Multistart on catalogue family models: the declared symmetries merge swapped optima.
#include <catch2/catch.hpp>
#include <cmath>

#include "engine/model/families/decay_models.h"
#include "engine/model/families/peak_models.h"
#include "engine/multistart/multistart.h"
#include "tests/engine/multistart_test_models.h"

namespace foothold {
namespace {

using testing::MakeProblem;
using testing::Vec;

// Truth of a two-lifetime trace (amplitude1, tau1, amplitude2, tau2, baseline).
const double kBiexp[5] = {5.0, 0.5, 2.0, 4.0, 0.1};
constexpr double kTruthTolerance = 0.05;

TEST_CASE("Multistart: biexp_decay components swapped are one basin sorted by tau", "[engine]") {
  const BiexpDecayModel model;
  Problem problem = MakeProblem(
      model,
      [](double x) {
        return kBiexp[0] * std::exp(-x / kBiexp[1]) + kBiexp[2] * std::exp(-x / kBiexp[3]) +
               kBiexp[4];
      },
      150, 0.0, 0.1, 0.002);
  problem.lower = Vec({-INFINITY, 1e-3, -INFINITY, 1e-3, -INFINITY});
  problem.upper = Vec({INFINITY, INFINITY, INFINITY, INFINITY, INFINITY});
  // The same guess with the components listed both ways round.
  const std::vector<StartCandidate> candidates = {
      {"guess:prony", Vec({4.5, 0.6, 2.5, 3.0, 0.0})},
      {"guess:swapped", Vec({2.5, 3.0, 4.5, 0.6, 0.0})}};
  MultistartOptions options;
  options.max_starts = 24;
  options.num_threads = 2;
  const MultistartSummary summary = RunMultistart(problem, candidates, {}, options);
  INFO(summary.FullReport());
  REQUIRE(summary.starts[0].converged);
  REQUIRE(summary.starts[1].converged);
  CHECK(summary.starts[0].basin == 0);
  CHECK(summary.starts[1].basin == 0);
  // The raw end points differ by the swap; the basin reports the canonical order.
  CHECK(summary.starts[0].end[1] < summary.starts[0].end[3]);
  CHECK(summary.starts[1].end[1] > summary.starts[1].end[3]);
  const Basin& best = summary.basins.front();
  for (int j = 0; j < 5; ++j) CHECK(std::abs(best.parameters[j] - kBiexp[j]) < kTruthTolerance);
  CHECK(best.has_standard_errors);

  options.num_threads = 1;
  const MultistartSummary serial = RunMultistart(problem, candidates, {}, options);
  REQUIRE(serial.starts.size() == summary.starts.size());
  for (size_t i = 0; i < serial.starts.size(); ++i) {
    CHECK(serial.starts[i].end == summary.starts[i].end);
    CHECK(serial.starts[i].basin == summary.starts[i].basin);
  }
}

TEST_CASE("Multistart: multi_gaussian with a baseline finds the permuted truth once", "[engine]") {
  const MultiGaussianModel model(2);
  Problem problem = MakeProblem(
      model,
      [](double x) {
        return 3 * std::exp(-0.5 * std::pow((x - 3) / 0.5, 2)) +
               2 * std::exp(-0.5 * std::pow((x - 6) / 0.7, 2)) + 0.5;
      },
      100, 0.0, 0.1, 0.01);
  problem.lower = Vec({-INFINITY, 0.0, 1e-3, -INFINITY, 0.0, 1e-3, -INFINITY});
  problem.upper = Vec({INFINITY, 10.0, INFINITY, INFINITY, 10.0, INFINITY, INFINITY});
  const std::vector<StartCandidate> candidates = {
      {"guess:peaks", Vec({2.5, 3.2, 0.6, 2.5, 5.8, 0.6, 0.4})},
      {"guess:peaks_reversed", Vec({2.5, 5.8, 0.6, 2.5, 3.2, 0.6, 0.4})}};
  MultistartOptions options;
  options.max_starts = 24;
  const MultistartSummary summary = RunMultistart(problem, candidates, {}, options);
  INFO(summary.FullReport());
  CHECK(summary.starts[0].basin == 0);
  CHECK(summary.starts[1].basin == 0);
  const Basin& best = summary.basins.front();
  CHECK(std::abs(best.parameters[1] - 3.0) < kTruthTolerance);
  CHECK(std::abs(best.parameters[4] - 6.0) < kTruthTolerance);
  CHECK(std::abs(best.parameters[6] - 0.5) < kTruthTolerance);
}

}  // namespace
}  // namespace foothold
