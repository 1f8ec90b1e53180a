// Published relations checked on fitted curves: a catalogue family is fitted to noise-free
// data from a perturbed start, and a textbook property of the fitted curve (found numerically
// on it by bisection, not computed from the formula) must equal the relation in the fitted
// parameters. The sources are standard results; each is marked where it is quoted from memory.

#include <catch2/catch.hpp>
#include <cmath>
#include <cstdint>
#include <functional>
#include <string>
#include <vector>

#include "engine/solve/levenberg_marquardt.h"
#include "engine/solve/problem.h"
#include "heuristics/families/catalogue.h"
#include "tests/certification/certification_support.h"

namespace foothold {
namespace certification {
namespace {

// Noise-free data: the fit recovers the generating parameters to this relative difference.
constexpr double kRecoveryTolerance = 1e-8;
// The numerically located property equals the published relation to this relative difference
// (bisection runs to the resolution of double precision, so this leaves ample margin).
constexpr double kRelationTolerance = 1e-10;
constexpr int kMaxBisections = 200;
constexpr std::uint64_t kSeed = 1913;

struct FittedFamily {
  FamilyInstance family;
  LocalFitSummary summary;
  // The fitted curve at one x.
  double operator()(double x) const {
    Eigen::MatrixXd at(1, 1);
    at(0, 0) = x;
    double value = std::nan("");
    family.model->Evaluate(at, summary.parameters.data(), &value);
    return value;
  }
  double Parameter(const std::string& name) const {
    const std::vector<std::string>& names = family.model->ParameterNames();
    for (size_t j = 0; j < names.size(); ++j) {
      if (names[j] == name) return summary.parameters[j];
    }
    FAIL("family has no parameter " << name);
    return 0;
  }
};

// Fits `family` to noise-free values of the curve at `truth` on an even grid, from a start
// perturbed by up to +-`perturbation` relative, and checks that the truth is recovered.
void FitNoiseFree(const std::string& family, const std::vector<double>& truth, double x_lo,
                  double x_hi, int num_points, double perturbation, FittedFamily* fitted) {
  FamilyRequest request;
  request.name = family;
  std::string error;
  const bool is_instantiated = InstantiateFamily(request, &fitted->family, &error);
  INFO("family " << family << ": " << error);
  REQUIRE(is_instantiated);
  const Model& model = *fitted->family.model;
  REQUIRE(model.NumParameters() == static_cast<int>(truth.size()));

  Problem problem;
  problem.model = &model;
  problem.data.predictor_names = model.PredictorNames();
  problem.data.predictors.resize(num_points, 1);
  for (int i = 0; i < num_points; ++i) {
    problem.data.predictors(i, 0) = x_lo + (x_hi - x_lo) * i / (num_points - 1);
  }
  problem.data.response.resize(num_points);
  model.Evaluate(problem.data.predictors, truth.data(), problem.data.response.data());
  const bool is_valid = problem.Validate(&error);
  INFO("problem: " << error);
  REQUIRE(is_valid);

  SeededNormal rng(kSeed);
  Eigen::VectorXd start(truth.size());
  for (size_t j = 0; j < truth.size(); ++j) {
    start[j] = truth[j] * (1.0 + rng.Uniform(-perturbation, perturbation));
  }
  fitted->summary = MinimizeLevenbergMarquardt(problem, start, LevenbergMarquardtOptions{});
  INFO("fit: " << fitted->summary.BriefReport());
  REQUIRE(fitted->summary.IsConverged());
  for (size_t j = 0; j < truth.size(); ++j) {
    INFO("parameter " << model.ParameterNames()[j] << " fitted "
                      << RoundTrip(fitted->summary.parameters[j]) << ", truth "
                      << RoundTrip(truth[j]));
    CHECK(RelativeDifference(fitted->summary.parameters[j], truth[j]) <= kRecoveryTolerance);
  }
}

// The x in [a, b] where g changes sign, by bisection to the resolution of double precision.
double Bisect(const std::function<double(double)>& g, double a, double b) {
  double ga = g(a);
  const double gb = g(b);
  REQUIRE(std::signbit(ga) != std::signbit(gb));
  for (int k = 0; k < kMaxBisections; ++k) {
    const double mid = 0.5 * (a + b);
    if (mid == a || mid == b) break;
    const double gm = g(mid);
    if (std::signbit(gm) == std::signbit(ga)) {
      a = mid;
      ga = gm;
    } else {
      b = mid;
    }
  }
  return 0.5 * (a + b);
}

// Full width at half maximum of a single peak above `baseline` with maximum near `center`:
// the two crossings of baseline + peak/2 found by bisection on each side.
double NumericalFwhm(const FittedFamily& curve, double center, double baseline, double reach) {
  const double peak = curve(center) - baseline;
  const auto above_half = [&](double x) { return curve(x) - baseline - 0.5 * peak; };
  const double left = Bisect(above_half, center - reach, center);
  const double right = Bisect(above_half, center, center + reach);
  return right - left;
}

TEST_CASE("Published formulas: a fitted gaussian's FWHM is 2*sqrt(2 ln 2)*sigma",
          "[certification][formulas]") {
  // Standard result (quoted from memory; e.g. the "Full width at half maximum" entry of any
  // spectroscopy or statistics reference): exp(-u^2/2) = 1/2 at u = sqrt(2 ln 2), so the
  // FWHM of h*exp(-(x-mu)^2/(2 sigma^2)) is 2*sqrt(2 ln 2)*sigma, about 2.3548*sigma.
  FittedFamily curve;
  FitNoiseFree("gaussian", {7.5, 2.0, 0.65, 1.25}, -2.0, 6.0, 81, 0.1, &curve);
  const double sigma = curve.Parameter("sigma");
  const double fwhm =
      NumericalFwhm(curve, curve.Parameter("center"), curve.Parameter("baseline"), 10.0 * sigma);
  const double published = 2.0 * std::sqrt(2.0 * std::log(2.0)) * std::abs(sigma);
  INFO("numerical FWHM " << RoundTrip(fwhm) << ", 2 sqrt(2 ln 2) sigma " << RoundTrip(published));
  CHECK(RelativeDifference(fwhm, published) <= kRelationTolerance);
  CHECK(std::abs(published / std::abs(sigma) - 2.3548200450309493) <= 1e-15);
}

TEST_CASE("Published formulas: a fitted lorentzian's FWHM is 2*hwhm", "[certification][formulas]") {
  // Standard result (from memory; the Cauchy-Lorentz line shape in any spectroscopy text):
  // gamma^2 / ((x-mu)^2 + gamma^2) = 1/2 at x = mu +- gamma, so FWHM = 2*gamma.
  FittedFamily curve;
  FitNoiseFree("lorentzian", {3.0, -0.5, 0.8, 0.2}, -8.0, 7.0, 121, 0.1, &curve);
  const double hwhm = curve.Parameter("hwhm");
  const double fwhm =
      NumericalFwhm(curve, curve.Parameter("center"), curve.Parameter("baseline"), 20.0 * hwhm);
  INFO("numerical FWHM " << RoundTrip(fwhm) << ", 2 hwhm " << RoundTrip(2.0 * hwhm));
  CHECK(RelativeDifference(fwhm, 2.0 * std::abs(hwhm)) <= kRelationTolerance);
}

TEST_CASE("Published formulas: a fitted Michaelis-Menten curve is at vmax/2 when x = km",
          "[certification][formulas]") {
  // Michaelis & Menten (1913), Biochem. Z. 49:333; the definition of the Michaelis constant
  // as the substrate concentration of half-maximal rate is textbook material (from memory).
  FittedFamily curve;
  FitNoiseFree("michaelis_menten", {42.0, 2.7}, 0.1, 40.0, 30, 0.3, &curve);
  const double vmax = curve.Parameter("vmax");
  const double km = curve.Parameter("km");
  const double half_rate_x = Bisect([&](double x) { return curve(x) - 0.5 * vmax; }, 1e-6, 1e3);
  INFO("x of half-maximal rate " << RoundTrip(half_rate_x) << ", km " << RoundTrip(km));
  CHECK(RelativeDifference(half_rate_x, km) <= kRelationTolerance);
  CHECK(RelativeDifference(curve(km), 0.5 * vmax) <= kRelationTolerance);
}

TEST_CASE("Published formulas: a fitted four-parameter logistic is half-way at log_ec50",
          "[certification][formulas]") {
  // The EC50 of the four-parameter logistic is the concentration of the response half-way
  // between bottom and top (standard dose-response definition, from memory).
  FittedFamily curve;
  FitNoiseFree("logistic4", {3.0, 97.0, -7.2, 0.9}, -11.0, -3.0, 33, 0.05, &curve);
  const double bottom = curve.Parameter("bottom");
  const double top = curve.Parameter("top");
  const double log_ec50 = curve.Parameter("log_ec50");
  const double midpoint_x =
      Bisect([&](double x) { return curve(x) - 0.5 * (bottom + top); }, -20.0, 5.0);
  INFO("x of the half-way response " << RoundTrip(midpoint_x) << ", log_ec50 "
                                     << RoundTrip(log_ec50));
  CHECK(std::abs(midpoint_x - log_ec50) <= kRelationTolerance * std::abs(log_ec50));
}

TEST_CASE("Published formulas: a fitted exponential decay halves above baseline at tau*ln 2",
          "[certification][formulas]") {
  // Half-life of first-order decay, t_1/2 = tau * ln 2 (standard result, from memory).
  FittedFamily curve;
  FitNoiseFree("exp_decay", {6.0, 1.8, 0.4}, 0.0, 10.0, 50, 0.2, &curve);
  const double amplitude = curve.Parameter("amplitude");
  const double tau = curve.Parameter("tau");
  const double baseline = curve.Parameter("baseline");
  const double half_life =
      Bisect([&](double x) { return curve(x) - baseline - 0.5 * amplitude; }, 0.0, 50.0 * tau);
  INFO("numerical half-life " << RoundTrip(half_life) << ", tau ln 2 "
                              << RoundTrip(tau * std::log(2.0)));
  CHECK(RelativeDifference(half_life, tau * std::log(2.0)) <= kRelationTolerance);
}

}  // namespace
}  // namespace certification
}  // namespace foothold
