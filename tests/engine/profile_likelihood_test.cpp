#include "engine/stats/profile_likelihood.h"

#include <catch2/catch.hpp>
#include <cmath>
#include <limits>
#include <memory>
#include <string>
#include <vector>

#include "engine/model/families/decay_models.h"
#include "engine/model/families/peak_models.h"
#include "engine/model/families/polynomial_models.h"
#include "engine/solve/local_fit.h"
#include "engine/stats/fit_statistics.h"

namespace foothold {
namespace {

// For a model linear in its parameters the profile interval is the Wald interval exactly
// (both thresholds reduce to (theta - estimate)^2 / C_jj = q^2): the first trial lands on
// the crossing, so only rounding separates them.
constexpr double kLinearTolerance = 1e-8;  // relative to the Wald half-width
// tests/reference/profile_scipy.py brackets with brentq at xtol = rtol = 1e-13 and the
// fits at ftol = xtol = gtol = 1e-15; with crossing_tolerance kTightCrossing the ends agree
// to about 1e-7 of the half-width, and we hold 1e-5.
constexpr double kTightCrossing = 1e-8;
constexpr double kScipyTolerance = 1e-5;  // relative to the half-width
// The optima of the two least-squares solvers agree to about 1e-8 of the half-width.
constexpr double kOptimumTolerance = 1e-6;
// With the default crossing_tolerance (1e-4 on sqrt of the cost rise) the end is off by about
// that fraction of the half-width.
constexpr double kDefaultTolerance = 2e-3;

double kInfinity() { return std::numeric_limits<double>::infinity(); }

Problem MakeProblem(const Model& model, const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                    const Eigen::VectorXd& sigma = Eigen::VectorXd()) {
  Problem problem;
  problem.model = &model;
  problem.data.predictor_names = {"x"};
  problem.data.predictors = x;
  problem.data.response = y;
  problem.data.sigma = sigma;
  return problem;
}

Eigen::VectorXd Fit(const Problem& problem, const Eigen::VectorXd& start) {
  const LocalFitSummary summary = RunLocalFit(problem, start, LocalFitOptions{});
  REQUIRE(summary.IsConverged());
  return summary.parameters;
}

ProfileLikelihoodOptions TightOptions() {
  ProfileLikelihoodOptions options;
  options.crossing_tolerance = kTightCrossing;
  return options;
}

// The two reference datasets of tests/reference/profile_scipy.py: noiseless curves plus a
// deterministic pseudo-noise, rebuilt here from the same formulas.
struct Curve {
  Eigen::VectorXd x, y;
};

Curve ExpDecayCurve() {
  Curve curve{Eigen::VectorXd(40), Eigen::VectorXd(40)};
  for (int i = 0; i < 40; ++i) {
    curve.x[i] = 0.25 * i;
    curve.y[i] = 5.0 * std::exp(-curve.x[i] / 2.0) + 0.5 + 0.4 * std::sin(2.4 * i + 0.3);
  }
  return curve;
}

Curve GaussianCurve() {
  Curve curve{Eigen::VectorXd(41), Eigen::VectorXd(41)};
  for (int i = 0; i < 41; ++i) {
    curve.x[i] = 0.25 * i;
    const double u = (curve.x[i] - 5.0) / 0.8;
    curve.y[i] = 3.0 * std::exp(-0.5 * u * u) + 0.5 + 0.4 * std::sin(2.3 * i + 1.0);
  }
  return curve;
}

// Printed by /usr/bin/python3 tests/reference/profile_scipy.py (Debian python3-scipy 1.10.1,
// numpy 1.24.2): least_squares(method='lm') refits, brentq crossings.
struct ScipyReference {
  std::vector<double> optimum;
  double cost_increase;
  std::vector<std::pair<double, double>> profile;
};

const ScipyReference kScipyExpDecay = {{5.058074404193465, 1.9783580788942523, 0.49800697213629586},
                                       0.3412247301894291,
                                       {{4.688046742865531, 5.4347758822782675},
                                        {1.6797312425628772, 2.354294064191843},
                                        {0.30468754144172033, 0.6689368049422703}}};

const ScipyReference kScipyGaussian = {
    {3.0000416810289097, 4.999999999805249, 0.8000222310500792, 0.49994105278145096},
    3.841458820694124,
    {{2.6892293064431048, 3.3176534191043676},
     {4.906573580485242, 5.093426418957431},
     {0.7023850546259665, 0.9108136288118509},
     {0.3785754986778477, 0.6188786094038122}}};

void CheckAgainstScipy(const ProfileLikelihoodSummary& summary, const Eigen::VectorXd& optimum,
                       const ScipyReference& reference, double tolerance) {
  REQUIRE(summary.is_computed);
  CHECK(summary.cost_increase == Approx(reference.cost_increase).epsilon(1e-12));
  for (size_t j = 0; j < reference.profile.size(); ++j) {
    INFO("parameter " << j << ": " << summary.intervals[j].message);
    const ProfileInterval& interval = summary.intervals[j];
    REQUIRE(interval.IsClosed());
    const double lower_width = reference.optimum[j] - reference.profile[j].first;
    const double upper_width = reference.profile[j].second - reference.optimum[j];
    CHECK(std::abs(optimum[j] - reference.optimum[j]) <= kOptimumTolerance * lower_width);
    CHECK(std::abs(interval.lower - reference.profile[j].first) <= tolerance * lower_width);
    CHECK(std::abs(interval.upper - reference.profile[j].second) <= tolerance * upper_width);
  }
}

// y = (a + b) x: only the sum is determined, so each profile is exactly flat.
class SumTimesXModel : public Model {
 public:
  int NumParameters() const override { return 2; }
  const std::vector<std::string>& ParameterNames() const override { return names_; }
  const std::vector<std::string>& PredictorNames() const override { return predictors_; }
  void Evaluate(const Eigen::MatrixXd& x, const double* p, double* values) const override {
    for (Eigen::Index i = 0; i < x.rows(); ++i) values[i] = (p[0] + p[1]) * x(i, 0);
  }
  void EvaluateWithJacobian(const Eigen::MatrixXd& x, const double* p, double* values,
                            double* jacobian) const override {
    const Eigen::Index n = x.rows();
    for (Eigen::Index i = 0; i < n; ++i) {
      values[i] = (p[0] + p[1]) * x(i, 0);
      jacobian[i] = jacobian[n + i] = x(i, 0);
    }
  }
  std::unique_ptr<Model> Clone() const override { return std::make_unique<SumTimesXModel>(); }

 private:
  std::vector<std::string> names_ = {"a", "b"};
  std::vector<std::string> predictors_ = {"x"};
};

void CheckEqualsWald(const Problem& problem, const Eigen::VectorXd& optimum) {
  const FitStatistics stats = ComputeFitStatistics(problem, optimum);
  const ProfileLikelihoodSummary summary = ComputeProfileLikelihood(problem, optimum);
  REQUIRE(summary.is_computed);
  for (int j = 0; j < problem.NumParameters(); ++j) {
    if (problem.IsFixed(j)) continue;
    INFO("parameter " << j << ": " << summary.intervals[j].message);
    const ProfileInterval& interval = summary.intervals[j];
    REQUIRE(interval.IsClosed());
    const double half_width = stats.ci_high[j] - optimum[j];
    CHECK(std::abs(interval.lower - stats.ci_low[j]) <= kLinearTolerance * half_width);
    CHECK(std::abs(interval.upper - stats.ci_high[j]) <= kLinearTolerance * half_width);
  }
}

TEST_CASE("ProfileLikelihood: a line's profile interval is its Wald interval", "[engine]") {
  const LineModel model;
  Eigen::VectorXd x(12), y(12), sigma(12);
  x << 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12;
  y << 2.1, 3.9, 6.2, 7.8, 10.1, 12.2, 13.8, 16.1, 18.3, 19.7, 22.4, 23.9;
  sigma.setConstant(0.25);
  SECTION("estimated scale: the F rule against Student-t intervals") {
    const Problem problem = MakeProblem(model, x, y);
    const Eigen::VectorXd optimum = Fit(problem, Eigen::Vector2d(1, 0));
    CheckEqualsWald(problem, optimum);
    CHECK(ComputeProfileLikelihood(problem, optimum).rule == ProfileRule::kFRatio);
  }
  SECTION("absolute sigma: the chi-square rule against normal intervals") {
    const Problem problem = MakeProblem(model, x, y, sigma);
    const Eigen::VectorXd optimum = Fit(problem, Eigen::Vector2d(1, 0));
    CheckEqualsWald(problem, optimum);
    const ProfileLikelihoodSummary summary = ComputeProfileLikelihood(problem, optimum);
    CHECK(summary.rule == ProfileRule::kChiSquare);
    // chi2_{1,0.95} = 1.959964^2 = 3.841459 (standard normal quantile, from memory).
    CHECK(summary.cost_increase == Approx(3.8414588207).epsilon(1e-9));
  }
}

TEST_CASE("ProfileLikelihood: with the only other parameter fixed, refits only evaluate",
          "[engine]") {
  const LineModel model;
  Eigen::VectorXd x(12), y(12);
  x << 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12;
  y << 2.1, 3.9, 6.2, 7.8, 10.1, 12.2, 13.8, 16.1, 18.3, 19.7, 22.4, 23.9;
  Problem problem = MakeProblem(model, x, y);
  problem.is_fixed = {false, true};
  const Eigen::VectorXd optimum = Fit(problem, Eigen::Vector2d(1, 0.5));
  CheckEqualsWald(problem, optimum);
  const ProfileLikelihoodSummary summary = ComputeProfileLikelihood(problem, optimum);
  CHECK(summary.intervals[0].num_refits == 2);  // each Wald end is the crossing
  CHECK_FALSE(summary.intervals[1].is_profiled);
}

TEST_CASE("ProfileLikelihood: a cancelling refit callback stops every end", "[engine]") {
  const ExpDecayModel model;
  const Curve curve = ExpDecayCurve();
  const Problem problem = MakeProblem(model, curve.x, curve.y);
  const Eigen::VectorXd optimum = Fit(problem, Eigen::Vector3d(5, 2, 0.5));
  ProfileLikelihoodOptions options;
  options.use_variable_projection = false;
  options.refit.callback = [](int, double) { return false; };
  const ProfileLikelihoodSummary summary = ComputeProfileLikelihood(problem, optimum, options);
  REQUIRE(summary.is_computed);
  CHECK(summary.num_refits == 1);
  for (const ProfileInterval& interval : summary.intervals) {
    INFO(interval.message);
    CHECK(interval.lower_end == ProfileEnd::kStopped);
    CHECK(interval.lower == -kInfinity());
    CHECK(interval.message.find("stopped") != std::string::npos);
  }
  CHECK(summary.intervals[0].message.find("refit cancelled") != std::string::npos);
}

TEST_CASE("ProfileLikelihood: a quadratic's profile interval is its Wald interval", "[engine]") {
  const PolynomialModel model(2);
  Eigen::VectorXd x(15), y(15);
  for (int i = 0; i < 15; ++i) {
    x[i] = i - 7;
    y[i] = 1 + 0.5 * x[i] - 0.1 * x[i] * x[i] + 0.3 * std::sin(1.9 * i);
  }
  const Problem problem = MakeProblem(model, x, y);
  CheckEqualsWald(problem, Fit(problem, Eigen::Vector3d(0, 0, 0)));
}

TEST_CASE("ProfileLikelihood: exp_decay with estimated scale matches SciPy", "[engine]") {
  const ExpDecayModel model;
  const Curve curve = ExpDecayCurve();
  const Problem problem = MakeProblem(model, curve.x, curve.y);
  const Eigen::VectorXd optimum = Fit(problem, Eigen::Vector3d(5, 2, 0.5));
  const ProfileLikelihoodSummary tight = ComputeProfileLikelihood(problem, optimum, TightOptions());
  CHECK(tight.rule == ProfileRule::kFRatio);
  CheckAgainstScipy(tight, optimum, kScipyExpDecay, kScipyTolerance);
  const ProfileLikelihoodSummary usual = ComputeProfileLikelihood(problem, optimum);
  CheckAgainstScipy(usual, optimum, kScipyExpDecay, kDefaultTolerance);
  CHECK_FALSE(usual.found_lower_cost);
  // tau's profile interval is skewed to the right of its symmetric Wald interval.
  const FitStatistics stats = ComputeFitStatistics(problem, optimum);
  CHECK(usual.intervals[1].upper - optimum[1] > 1.1 * (stats.ci_high[1] - optimum[1]));
  CHECK(optimum[1] - usual.intervals[1].lower < 0.95 * (optimum[1] - stats.ci_low[1]));
}

TEST_CASE("ProfileLikelihood: gaussian with absolute sigma matches SciPy", "[engine]") {
  const GaussianModel model;
  const Curve curve = GaussianCurve();
  const Problem problem =
      MakeProblem(model, curve.x, curve.y, Eigen::VectorXd::Constant(curve.x.size(), 0.3));
  const Eigen::VectorXd optimum = Fit(problem, (Eigen::VectorXd(4) << 3, 5, 0.8, 0.5).finished());
  const ProfileLikelihoodSummary tight = ComputeProfileLikelihood(problem, optimum, TightOptions());
  CHECK(tight.rule == ProfileRule::kChiSquare);
  CheckAgainstScipy(tight, optimum, kScipyGaussian, kScipyTolerance);
  CheckAgainstScipy(ComputeProfileLikelihood(problem, optimum), optimum, kScipyGaussian,
                    kDefaultTolerance);
  SECTION("the same with variable projection off") {
    ProfileLikelihoodOptions options = TightOptions();
    options.use_variable_projection = false;
    CheckAgainstScipy(ComputeProfileLikelihood(problem, optimum, options), optimum, kScipyGaussian,
                      kScipyTolerance);
  }
}

TEST_CASE("ProfileLikelihood: a bound inside the interval leaves that side open", "[engine]") {
  const ExpDecayModel model;
  const Curve curve = ExpDecayCurve();
  Problem problem = MakeProblem(model, curve.x, curve.y);
  problem.lower = Eigen::Vector3d(-kInfinity(), 0.1, -kInfinity());
  problem.upper = Eigen::Vector3d(kInfinity(), 2.2, kInfinity());
  const Eigen::VectorXd optimum = Fit(problem, Eigen::Vector3d(5, 2, 0.5));
  const ProfileLikelihoodSummary summary =
      ComputeProfileLikelihood(problem, optimum, TightOptions());
  const ProfileInterval& tau = summary.intervals[1];
  INFO(tau.message);
  CHECK(tau.upper_end == ProfileEnd::kBound);
  CHECK(tau.upper == kInfinity());
  CHECK(tau.message.find("not reached within bounds") != std::string::npos);
  CHECK(tau.lower_end == ProfileEnd::kCrossed);
  CHECK(std::abs(tau.lower - kScipyExpDecay.profile[1].first) <=
        kScipyTolerance * (optimum[1] - kScipyExpDecay.profile[1].first));
  CHECK(std::string(ToString(tau.upper_end)) == "bound");

  SECTION("an estimate on its bound is open on that side at once") {
    problem.lower[2] = optimum[2];
    const ProfileLikelihoodSummary on_bound = ComputeProfileLikelihood(problem, optimum);
    const ProfileInterval& baseline = on_bound.intervals[2];
    CHECK(baseline.lower_end == ProfileEnd::kBound);
    CHECK(baseline.lower == -kInfinity());
    CHECK(baseline.upper_end == ProfileEnd::kCrossed);
    CHECK(baseline.message.find("sits on the bound") != std::string::npos);
  }
}

TEST_CASE("ProfileLikelihood: an unidentifiable parameter has a flat, open profile", "[engine]") {
  const SumTimesXModel model;
  Eigen::VectorXd x(10), y(10);
  for (int i = 0; i < 10; ++i) {
    x[i] = i + 1;
    y[i] = 3 * x[i] + 0.2 * std::sin(3.1 * i);
  }
  const Problem problem = MakeProblem(model, x, y);
  const Eigen::VectorXd optimum = Fit(problem, Eigen::Vector2d(1, 1));
  const ProfileLikelihoodSummary summary = ComputeProfileLikelihood(problem, optimum);
  REQUIRE(summary.is_computed);
  for (const ProfileInterval& interval : summary.intervals) {
    INFO(interval.message);
    CHECK(interval.lower_end == ProfileEnd::kFlat);
    CHECK(interval.upper_end == ProfileEnd::kFlat);
    CHECK(interval.lower == -kInfinity());
    CHECK(interval.upper == kInfinity());
    CHECK(interval.message.find("open: the profile flattens") != std::string::npos);
    CHECK(interval.num_refits == 2 * ProfileLikelihoodOptions{}.max_bracket_steps);
  }
}

TEST_CASE("ProfileLikelihood: fixed parameters are not profiled, the others are", "[engine]") {
  const ExpDecayModel model;
  const Curve curve = ExpDecayCurve();
  Problem problem = MakeProblem(model, curve.x, curve.y);
  problem.is_fixed = {false, false, true};
  const Eigen::VectorXd optimum = Fit(problem, Eigen::Vector3d(5, 2, 0.5));
  const ProfileLikelihoodSummary summary = ComputeProfileLikelihood(problem, optimum);
  REQUIRE(summary.is_computed);
  CHECK_FALSE(summary.intervals[2].is_profiled);
  CHECK(summary.intervals[2].lower_end == ProfileEnd::kNotProfiled);
  CHECK(summary.intervals[0].IsClosed());
  CHECK(summary.intervals[1].IsClosed());
  CHECK(summary.num_refits == summary.intervals[0].num_refits + summary.intervals[1].num_refits);
}

TEST_CASE("ProfileLikelihood: repeated runs give bit-identical ends", "[engine]") {
  const GaussianModel model;
  const Curve curve = GaussianCurve();
  const Problem problem = MakeProblem(model, curve.x, curve.y);
  const Eigen::VectorXd optimum = Fit(problem, (Eigen::VectorXd(4) << 3, 5, 0.8, 0.5).finished());
  const ProfileLikelihoodSummary first = ComputeProfileLikelihood(problem, optimum);
  const ProfileLikelihoodSummary second = ComputeProfileLikelihood(problem, optimum);
  for (size_t j = 0; j < first.intervals.size(); ++j) {
    CHECK(first.intervals[j].lower == second.intervals[j].lower);
    CHECK(first.intervals[j].upper == second.intervals[j].upper);
    CHECK(first.intervals[j].num_refits == second.intervals[j].num_refits);
  }
}

TEST_CASE("ProfileLikelihood: a start that is not the optimum is reported", "[engine]") {
  const ExpDecayModel model;
  const Curve curve = ExpDecayCurve();
  const Problem problem = MakeProblem(model, curve.x, curve.y);
  // The amplitude 0.5 (about three standard errors) off the optimum: every refit, which
  // re-optimises the amplitude, ends below the cost of the given point.
  const Eigen::VectorXd off = Fit(problem, Eigen::Vector3d(5, 2, 0.5)) + Eigen::Vector3d(0.5, 0, 0);
  const ProfileLikelihoodSummary summary = ComputeProfileLikelihood(problem, off);
  REQUIRE(summary.is_computed);
  CHECK(summary.found_lower_cost);
  CHECK(summary.lowest_cost < summary.optimum_cost);
  CHECK(summary.lowest_cost_parameters.size() == 3);
  CHECK(summary.BriefReport().find("lower rss") != std::string::npos);
}

TEST_CASE("ProfileLikelihood: no profile without a finite optimum or an estimable scale",
          "[engine]") {
  const ExpDecayModel model;
  const Curve curve = ExpDecayCurve();
  SECTION("outside the bounds") {
    Problem problem = MakeProblem(model, curve.x, curve.y);
    problem.lower = Eigen::Vector3d(-kInfinity(), 3, -kInfinity());
    problem.upper = Eigen::Vector3d::Constant(kInfinity());
    const ProfileLikelihoodSummary summary =
        ComputeProfileLikelihood(problem, Eigen::Vector3d(5, 2, 0.5));
    CHECK_FALSE(summary.is_computed);
    CHECK(summary.message.find("inside the bounds") != std::string::npos);
    CHECK(summary.intervals[1].lower_end == ProfileEnd::kNotProfiled);
  }
  SECTION("the model is not finite at the point (tau = 0)") {
    const Problem problem = MakeProblem(model, curve.x, curve.y);
    const ProfileLikelihoodSummary summary =
        ComputeProfileLikelihood(problem, Eigen::Vector3d(5, 0, 0.5));
    CHECK_FALSE(summary.is_computed);
    CHECK(summary.message.find("not finite") != std::string::npos);
  }
  SECTION("no sigma and no degrees of freedom") {
    const Problem problem = MakeProblem(model, curve.x.head(3), curve.y.head(3));
    const ProfileLikelihoodSummary summary =
        ComputeProfileLikelihood(problem, Eigen::Vector3d(5, 2, 0.5));
    CHECK_FALSE(summary.is_computed);
    CHECK(summary.message.find("dof = 0") != std::string::npos);
  }
}

TEST_CASE("ProfileLikelihood: options name the field, the value and the rule", "[engine]") {
  std::string error;
  CHECK(ProfileLikelihoodOptions{}.Validate(&error));
  ProfileLikelihoodOptions options;
  options.confidence_level = 1;
  CHECK_FALSE(options.Validate(&error));
  CHECK(error == "confidence_level = 1: must be in (0, 1)");
  options = {};
  options.max_step_growth = 1;
  CHECK_FALSE(options.Validate(&error));
  CHECK(error == "max_step_growth = 1: must be finite and > 1");
  options = {};
  options.max_bracket_steps = 0;
  CHECK_FALSE(options.Validate(&error));
  CHECK(error == "max_bracket_steps = 0: must be >= 1");
  options = {};
  options.crossing_tolerance = 0.5;
  CHECK_FALSE(options.Validate(&error));
  CHECK(error == "crossing_tolerance = 0.5: must be in (0, 0.1]");
  options = {};
  options.refit.max_iterations = -1;
  CHECK_FALSE(options.Validate(&error));
  CHECK(error.rfind("refit.max_iterations = -1", 0) == 0);
  ProfileEnd end = ProfileEnd::kCrossed;
  CHECK(ProfileEndFromString("flat", &end));
  CHECK(end == ProfileEnd::kFlat);
  CHECK_FALSE(ProfileEndFromString("closed", &end));
}

}  // namespace
}  // namespace foothold
