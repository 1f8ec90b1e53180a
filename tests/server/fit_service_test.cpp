// The fit service without the CLI: how a FitRequest becomes a problem, and how the verdict
// reads the statistics.
#include "server/fit_service.h"

#include <catch2/catch.hpp>
#include <cmath>

using foothold::FitOutcome;
using foothold::FitRequest;
using foothold::PreparedFit;

namespace {

// Points of a gaussian (height 10, center 5, sigma 1.2, baseline 1) with deterministic wiggles.
FitRequest GaussianRequest(double sigma = 0) {
  std::vector<double> x;
  std::vector<double> y;
  for (int i = 0; i <= 40; ++i) {
    x.push_back(0.25 * i);
    y.push_back(10.0 * std::exp(-(x.back() - 5.0) * (x.back() - 5.0) / (2 * 1.2 * 1.2)) + 1.0 +
                0.05 * std::sin(7.3 * i * i));
  }
  FitRequest request;
  std::string error;
  const size_t n = x.size();
  REQUIRE(request.data.AddColumn("x", x, &error));
  REQUIRE(request.data.AddColumn("y", y, &error));
  if (sigma > 0) REQUIRE(request.data.AddColumn("sigma", std::vector<double>(n, sigma), &error));
  request.model.family = "gaussian";
  request.start = {{"height", 8}, {"center", 4.5}, {"sigma", 1}, {"baseline", 0.5}};
  return request;
}

bool HasFlag(const FitOutcome& outcome, const std::string& flag) {
  for (const std::string& f : outcome.verdict.flags) {
    if (f == flag) return true;
  }
  return false;
}

FitOutcome Fit(const FitRequest& request) {
  FitOutcome outcome;
  std::string error;
  INFO(error);
  REQUIRE(foothold::RunFit(request, &outcome, &error));
  return outcome;
}

}  // namespace

TEST_CASE("FitService: a clean fit converges with no flags", "[server]") {
  const FitOutcome outcome = Fit(GaussianRequest());
  CHECK(outcome.IsConverged());
  CHECK(outcome.verdict.flags.empty());
  CHECK(outcome.best.parameters[1] == Approx(5.0).margin(0.02));
  // Degenerate basins (a peak parked outside the data) may exist, but far above the best.
  REQUIRE(outcome.basins.size() >= 1);
  CHECK(outcome.starts[0].basin == 0);
  for (size_t k = 1; k < outcome.basins.size(); ++k) {
    CHECK(outcome.basins[k].rss > 10 * outcome.basins[0].rss);
  }
  CHECK(outcome.predictor_names == std::vector<std::string>{"x"});
}

TEST_CASE("FitService: a bound that cuts off the optimum is flagged at_bound", "[server]") {
  FitRequest request = GaussianRequest();
  request.bounds = {{"center", 0.0, 4.8}};
  const FitOutcome outcome = Fit(request);
  CHECK(outcome.best.parameters[1] == Approx(4.8));
  CHECK(outcome.statistics.at_bound[1]);
  CHECK(HasFlag(outcome, "at_bound"));
}

TEST_CASE("FitService: a fixed parameter keeps its value and is not counted", "[server]") {
  FitRequest request = GaussianRequest();
  request.start.pop_back();
  request.fix = {{"baseline", 1.0}};
  const FitOutcome outcome = Fit(request);
  CHECK(outcome.best.parameters[3] == 1.0);
  CHECK(outcome.is_fixed[3]);
  CHECK(outcome.statistics.num_free == 3);
  CHECK(outcome.statistics.dof == 41 - 3);
}

TEST_CASE("FitService: parameters that only enter as a sum are not identifiable", "[server]") {
  FitRequest request = GaussianRequest();
  request.model = {};
  request.model.expression = "a*x + b*x + c";
  request.start = {{"a", 1}, {"b", 1}, {"c", 0}};
  const FitOutcome outcome = Fit(request);
  CHECK(outcome.statistics.is_rank_deficient);
  REQUIRE_FALSE(outcome.verdict.flags.empty());
  CHECK(HasFlag(outcome, "not_identifiable"));
}

TEST_CASE("FitService: sigma mode decides the covariance scale and the chi-square test",
          "[server]") {
  FitRequest request = GaussianRequest(0.001);
  const FitOutcome absolute = Fit(request);
  CHECK(absolute.sigma_column == "sigma");
  CHECK(absolute.statistics.covariance_scale == 1.0);
  CHECK(HasFlag(absolute, "chi2_inconsistent"));
  request.sigma_mode = "relative";
  const FitOutcome relative = Fit(request);
  CHECK(relative.statistics.covariance_scale == Approx(relative.statistics.reduced_chi2));
  CHECK_FALSE(HasFlag(relative, "chi2_inconsistent"));
}

TEST_CASE("FitService: a parameter may share a name with the sigma column", "[server]") {
  FitRequest request = GaussianRequest(0.05);
  request.model = {};
  request.model.expression = "h*exp(-(x-m)^2/(2*sigma^2)) + b";
  request.start = {{"h", 8}, {"m", 4.5}, {"sigma", 1}, {"b", 0.5}};
  const FitOutcome outcome = Fit(request);
  CHECK(outcome.parameter_names == std::vector<std::string>{"h", "m", "sigma", "b"});
  // sigma enters squared, so the multistart may report either sign.
  CHECK(std::abs(outcome.best.parameters[2]) == Approx(1.2).margin(0.02));
}

TEST_CASE("FitService: inconsistent requests are refused with a precise message", "[server]") {
  PreparedFit prepared;
  std::string error;
  FitRequest both = GaussianRequest();
  both.fix = {{"height", 9}};
  CHECK_FALSE(foothold::PrepareFit(both, &prepared, &error));
  CHECK(error == "start.height: the parameter is also in fix; give it in one place");

  FitRequest relative = GaussianRequest();
  relative.sigma_mode = "relative";
  CHECK_FALSE(foothold::PrepareFit(relative, &prepared, &error));
  CHECK(error.find("sigma_mode = 'relative' needs per-point sigma") == 0);

  FitRequest column = GaussianRequest();
  column.sigma_column = "err";
  CHECK_FALSE(foothold::PrepareFit(column, &prepared, &error));
  CHECK(error == "sigma_column: the data have no column 'err' (columns: x, y)");

  FitRequest degree = GaussianRequest();
  degree.model.degree = 3;
  CHECK_FALSE(foothold::PrepareFit(degree, &prepared, &error));
  CHECK(error == "model.degree: family 'gaussian' takes no degree");

  FitRequest fixed_outside = GaussianRequest();
  fixed_outside.start.pop_back();
  fixed_outside.fix = {{"baseline", -2}};
  fixed_outside.bounds = {{"baseline", 0, 5}};
  CHECK_FALSE(foothold::PrepareFit(fixed_outside, &prepared, &error));
  CHECK(error == "fix.baseline = -2 is outside its bounds [0, 5]");
}

TEST_CASE("FitService: a model that is not finite at the start is reported, not fitted",
          "[server]") {
  FitRequest request = GaussianRequest();
  request.model = {};
  request.model.expression = "log(a*x) + b";
  request.start = {{"a", -1}, {"b", 0}};
  const FitOutcome outcome = Fit(request);
  CHECK(outcome.best.termination == foothold::Termination::kNonFiniteModel);
  CHECK_FALSE(outcome.IsConverged());
  CHECK(outcome.basins.empty());
  CHECK(outcome.verdict.flags.front() == "non_finite_model");
}

TEST_CASE("FitService: with every parameter fixed nothing is fitted and the verdict says so",
          "[server]") {
  FitRequest request = GaussianRequest();
  request.start.clear();
  request.fix = {{"height", 10}, {"center", 5}, {"sigma", 1.2}, {"baseline", 1}};
  const FitOutcome outcome = Fit(request);
  CHECK(outcome.best.termination == foothold::Termination::kNoFreeParameters);
  CHECK(outcome.statistics.num_free == 0);
  CHECK(outcome.verdict.flags.front() == "no_free_parameters");
}
