// Basin clustering: canonical order modulo permutation symmetries, tolerances, verdict flags.
#include <catch2/catch.hpp>
#include <cmath>

#include "engine/multistart/internal/basin_clustering.h"
#include "engine/multistart/multistart.h"
#include "tests/engine/multistart_test_models.h"

namespace foothold {
namespace {

using testing::MakeProblem;
using testing::Vec;

// Truth of the three-peak problem: (height, center, sigma) per peak, centers increasing.
const double kPeaks[3][3] = {{3.0, 2.0, 0.5}, {2.0, 5.0, 0.6}, {4.0, 8.0, 0.4}};
// The fitted optimum lies within this of the truth (perturbation 0.02 on 120 points).
constexpr double kTruthTolerance = 0.05;

double ThreePeaks(double x) {
  double y = 0;
  for (const auto& peak : kPeaks)
    y += peak[0] * std::exp(-0.5 * std::pow((x - peak[1]) / peak[2], 2));
  return y;
}

// The truth with the peaks listed in the order `order` (a permutation of 0, 1, 2).
Eigen::VectorXd PermutedTruth(const int order[3], double shift) {
  Eigen::VectorXd p(9);
  for (int slot = 0; slot < 3; ++slot) {
    for (int k = 0; k < 3; ++k) p[3 * slot + k] = kPeaks[order[slot]][k] * (1 + shift);
  }
  return p;
}

struct PeaksCase {
  testing::PointwiseModel model;
  Problem problem;
  std::vector<StartCandidate> candidates;
  SearchBox box;
  explicit PeaksCase(bool symmetric) : model(testing::GaussianPeaksModel(3, symmetric)) {
    problem = MakeProblem(model, ThreePeaks, 120, 0.0, 0.085, 0.02);
    testing::BoundPeakWidths(3, &problem);
    const int identity[3] = {0, 1, 2}, reversed[3] = {2, 1, 0}, rotated[3] = {1, 2, 0};
    candidates = {{"guess:a", PermutedTruth(identity, 0.05)},
                  {"guess:b", PermutedTruth(reversed, -0.04)},
                  {"guess:c", PermutedTruth(rotated, 0.03)}};
    box.lower = Vec({0.1, 0.0, 0.1, 0.1, 0.0, 0.1, 0.1, 0.0, 0.1});
    box.upper = Vec({6.0, 10.0, 2.0, 6.0, 10.0, 2.0, 6.0, 10.0, 2.0});
  }
};

TEST_CASE("Canonicalize: sorts symmetric members by their sort parameter", "[engine]") {
  PermutationSymmetry peaks;
  peaks.members = {{0, 1, 2}, {3, 4, 5}, {6, 7, 8}};
  peaks.sort_position = 1;
  const Eigen::VectorXd p = Vec({4, 8, 0.4, 3, 2, 0.5, 2, 5, 0.6});
  const Eigen::VectorXd canonical = internal::Canonicalize(p, {peaks});
  CHECK(canonical == Vec({3, 2, 0.5, 2, 5, 0.6, 4, 8, 0.4}));
  CHECK(internal::Canonicalize(canonical, {peaks}) == canonical);
  CHECK(internal::Canonicalize(p, {}) == p);
}

TEST_CASE("SameBasin: cost and parameter tolerances", "[engine]") {
  internal::BasinTolerances tolerances;
  tolerances.parameter_scale = Vec({1.0, 1.0});
  tolerances.is_free = {true, true};
  const internal::EndPoint leader{0, 1.0, Vec({1.0, 2.0})};
  const Eigen::VectorXd errors = Vec({0.1, 0.1});
  CHECK(internal::SameBasin(leader, errors, {1, 1.0 + 1e-7, Vec({1.2, 2.1})}, tolerances));
  CHECK_FALSE(internal::SameBasin(leader, errors, {1, 1.0 + 1e-5, Vec({1.0, 2.0})}, tolerances));
  CHECK_FALSE(internal::SameBasin(leader, errors, {1, 1.0, Vec({1.4, 2.0})}, tolerances));
  // Without standard errors the relative tolerance alone decides.
  const Eigen::VectorXd none = Vec({std::nan(""), std::nan("")});
  CHECK_FALSE(internal::SameBasin(leader, none, {1, 1.0, Vec({1.2, 2.0})}, tolerances));
  CHECK(internal::SameBasin(leader, none, {1, 1.0, Vec({1.0 + 5e-5, 2.0})}, tolerances));
}

TEST_CASE("Multistart: permuted optima of three identical peaks form one basin", "[engine]") {
  const PeaksCase peaks(/*symmetric=*/true);
  MultistartOptions options;
  options.max_starts = 24;
  const MultistartSummary summary =
      RunMultistart(peaks.problem, peaks.candidates, peaks.box, options);
  INFO(summary.FullReport());
  REQUIRE(summary.IsValid());
  REQUIRE(summary.starts.size() >= 3);
  for (int c = 0; c < 3; ++c) {
    REQUIRE(summary.starts[c].converged);
    CHECK(summary.starts[c].basin == 0);
  }
  const Basin& best = summary.basins.front();
  CHECK(best.num_starts >= 3);
  for (int slot = 0; slot < 3; ++slot) {
    for (int k = 0; k < 3; ++k)
      CHECK(std::abs(best.parameters[3 * slot + k] - kPeaks[slot][k]) < kTruthTolerance);
  }
  CHECK(best.has_standard_errors);
  CHECK(best.standard_errors.allFinite());
  CHECK(best.standard_errors.minCoeff() > 0);
  CHECK_FALSE(summary.best_basin_single_start);
  // Permuted copies are merged, so nothing else comes close to the best fit.
  CHECK_FALSE(summary.ambiguous_basins);
}

TEST_CASE("Multistart: without the symmetry the same-curve fall-back merges permuted optima",
          "[engine]") {
  const PeaksCase peaks(/*symmetric=*/false);
  MultistartOptions options;
  options.max_starts = 3;  // the candidates only
  const MultistartSummary summary =
      RunMultistart(peaks.problem, peaks.candidates, peaks.box, options);
  INFO(summary.FullReport());
  REQUIRE(summary.num_starts_run == 3);
  for (int c = 0; c < 3; ++c) REQUIRE(summary.starts[c].converged);
  // The end points differ by a permutation the model does not declare, so their parameters
  // do not match; their curves do, and that makes them one basin.
  CHECK(std::abs(summary.starts[0].end[1] - summary.starts[1].end[1]) > 1);
  REQUIRE(summary.basins.size() == 1);
  CHECK(summary.basins[0].num_starts == 3);
  CHECK_FALSE(summary.ambiguous_basins);
  CHECK_FALSE(summary.best_basin_single_start);
}

TEST_CASE("Multistart: basins are sorted by rss with delta and share", "[engine]") {
  const testing::PointwiseModel model = testing::SineModel();
  const Problem problem = MakeProblem(
      model, [](double x) { return 2.0 * std::sin(6.283185307179586 * 1.3 * x); }, 80, 0.0, 0.05,
      0.05);
  SearchBox box;
  box.lower = Vec({-5.0, 0.05});
  box.upper = Vec({5.0, 6.0});
  MultistartOptions options;
  options.max_starts = 40;
  const MultistartSummary summary =
      RunMultistart(problem, {{"user", Vec({1.0, 1.0})}}, box, options);
  REQUIRE(summary.basins.size() > 2);
  double share = 0;
  int members = 0;
  for (size_t b = 0; b < summary.basins.size(); ++b) {
    const Basin& basin = summary.basins[b];
    CHECK(basin.id == static_cast<int>(b));
    if (b > 0) CHECK(basin.rss >= summary.basins[b - 1].rss);
    CHECK(basin.delta_rss == basin.rss - summary.basins[0].rss);
    share += basin.share;
    members += basin.num_starts;
  }
  CHECK(share == Approx(1.0));
  CHECK(members == summary.num_converged);
  for (const StartRecord& record : summary.starts) {
    if (!record.converged) {
      CHECK(record.basin == -1);
    } else {
      REQUIRE(record.basin >= 0);
      CHECK(std::abs(record.rss - summary.basins[record.basin].rss) <=
            options.cost_relative_tolerance * record.rss + 1e-12);
    }
  }
  CHECK(summary.best_start_index == summary.basins[0].representative_start);
  // The true optimum is far below the others: not ambiguous.
  CHECK_FALSE(summary.ambiguous_basins);
  CHECK(summary.best_gap_chi2 > 100);
}

}  // namespace
}  // namespace foothold
