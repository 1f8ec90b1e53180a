// Tests of the catalogue's closed-form models: analytic Jacobians against finite
// differences, values at hand-computed points, published width relations, domains, linear
// parameters, symmetries, Clone and the absence of heap allocation in the hot path.

#include <unistd.h>

#include <algorithm>
#include <atomic>
#include <catch2/catch.hpp>
#include <cctype>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <functional>
#include <map>
#include <new>
#include <random>
#include <sstream>
#include <string>
#include <vector>

#include "engine/model/families/decay_models.h"
#include "engine/model/families/dose_response_models.h"
#include "engine/model/families/growth_models.h"
#include "engine/model/families/oscillation_models.h"
#include "engine/model/families/peak_models.h"
#include "engine/model/families/polynomial_models.h"
#include "tests/engine/allocation_counter.h"

namespace foothold {
namespace {

// Finite-difference agreement: relative, with a floor at a small fraction of the column's
// largest entry (entries far below it carry only rounding noise in the difference).
constexpr double kJacobianRelativeTolerance = 1e-6;
constexpr double kColumnFloorFraction = 1e-4;
constexpr double kAbsoluteFloor = 1e-12;
constexpr double kStepFraction = 1e-4;
// Exact identities evaluated in floating point.
constexpr double kValueTolerance = 1e-12;
constexpr int kNumRandomPoints = 25;
constexpr double kLn2 = 0.69314718055994530942;

struct FamilyCase {
  std::string name;
  std::function<std::unique_ptr<Model>()> make;
  double x_low;
  double x_high;
  std::vector<std::vector<double>> parameter_sets;
};

std::vector<FamilyCase> AllCases() {
  return {
      {"line",
       [] { return std::make_unique<LineModel>(); },
       -5,
       5,
       {{2, -1}, {-0.3, 4}, {1e3, 2e-2}}},
      {"polynomial(4)",
       [] { return std::make_unique<PolynomialModel>(4); },
       -2,
       2,
       {{1, -2, 0.5, 0.3, -0.1}, {0, 0, 0, 0, 1}, {-3, 1e2, 7, -0.5, 2}}},
      {"polynomial(0)", [] { return std::make_unique<PolynomialModel>(0); }, -2, 2, {{3}}},
      {"gaussian",
       [] { return std::make_unique<GaussianModel>(); },
       0,
       10,
       {{3, 5, 1.2, 0.5}, {-2, 4, 0.3, 1}, {100, 6, 3, -10}}},
      {"lorentzian",
       [] { return std::make_unique<LorentzianModel>(); },
       0,
       10,
       {{3, 5, 1.2, 0.5}, {-2, 4, 0.3, 1}, {100, 6, 3, -10}}},
      {"pseudo_voigt",
       [] { return std::make_unique<PseudoVoigtModel>(); },
       0,
       10,
       {{3, 5, 1.5, 0.3, 0.2}, {1, 4, 0.5, 0, 1}, {-2, 6, 2, 1, 0}}},
      {"multi_gaussian(3)",
       [] { return std::make_unique<MultiGaussianModel>(3); },
       0,
       10,
       {{3, 2, 0.5, 2, 5, 1, 1, 8, 0.7, 0.3},
        {1, 4, 1, 1.5, 4.5, 0.8, -0.5, 6, 2, 0},
        {10, 7, 3, 4, 1, 0.4, 2, 9, 0.2, -1}}},
      {"multi_lorentzian(3)",
       [] { return std::make_unique<MultiLorentzianModel>(3); },
       0,
       10,
       {{3, 2, 0.5, 2, 5, 1, 1, 8, 0.7, 0.3},
        {1, 4, 1, 1.5, 4.5, 0.8, -0.5, 6, 2, 0},
        {10, 7, 3, 4, 1, 0.4, 2, 9, 0.2, -1}}},
      {"exp_decay",
       [] { return std::make_unique<ExpDecayModel>(); },
       0,
       10,
       {{5, 2, 0.5}, {-3, 0.7, 1}, {100, 20, 0}}},
      {"biexp_decay",
       [] { return std::make_unique<BiexpDecayModel>(); },
       0,
       10,
       {{5, 0.5, 2, 4, 0.1}, {1, 3, 1, 3.5, 0}, {-2, 1, 6, 8, 1}}},
      {"stretched_exp",
       [] { return std::make_unique<StretchedExpModel>(); },
       0.01,
       10,
       {{5, 2, 0.6, 0.1}, {2, 1, 1.5, 0}, {1, 5, 0.3, -1}}},
      {"logistic4",
       [] { return std::make_unique<Logistic4Model>(); },
       -9,
       -3,
       {{0, 100, -6, 1}, {10, 90, -5, -1.5}, {100, 0, -7, 0.5}}},
      {"logistic5",
       [] { return std::make_unique<Logistic5Model>(); },
       -9,
       -3,
       {{0, 100, -6, 1, 1}, {5, 95, -5.5, 2, 0.4}, {100, 0, -6, -0.8, 2.5}}},
      {"michaelis_menten",
       [] { return std::make_unique<MichaelisMentenModel>(); },
       0,
       20,
       {{10, 2}, {3, 0.5}, {200, 15}}},
      {"hill_binding",
       [] { return std::make_unique<HillBindingModel>(); },
       0.01,
       20,
       {{10, 2, 1}, {5, 1, 2.5}, {1, 10, 0.6}}},
      {"power_law",
       [] { return std::make_unique<PowerLawModel>(); },
       0.1,
       10,
       {{2, 1.5}, {-1, -0.5}, {0.3, 3}}},
      {"sine",
       [] { return std::make_unique<SineModel>(); },
       0,
       10,
       {{2, 0.3, 0.5, 1}, {-1, 1.2, -2, 0}, {5, 0.05, 3, 2}}},
      {"damped_sine",
       [] { return std::make_unique<DampedSineModel>(); },
       0,
       10,
       {{2, 3, 0.3, 0.5, 1}, {-1, 10, 1.2, -2, 0}, {5, 0.8, 0.05, 3, 2}}},
      {"gompertz",
       [] { return std::make_unique<GompertzModel>(); },
       0,
       10,
       {{10, 2, 0.8}, {5, 1, 0.3}, {-3, 3, 1.5}}},
      {"arrhenius",
       [] { return std::make_unique<ArrheniusModel>(); },
       250,
       600,
       {{1e6, 5e4}, {1e3, 2e4}, {10, 1e5}}},
  };
}

Eigen::MatrixXd RandomPoints(double low, double high, unsigned seed) {
  std::mt19937 random(seed);
  std::uniform_real_distribution<double> uniform(low, high);
  Eigen::MatrixXd x(kNumRandomPoints, 1);
  for (int i = 0; i < kNumRandomPoints; ++i) x(i, 0) = uniform(random);
  return x;
}

Eigen::VectorXd Values(const Model& model, const Eigen::MatrixXd& x, const std::vector<double>& p) {
  Eigen::VectorXd values(x.rows());
  model.Evaluate(x, p.data(), values.data());
  return values;
}

Eigen::MatrixXd Jacobian(const Model& model, const Eigen::MatrixXd& x,
                         const std::vector<double>& p) {
  Eigen::VectorXd values(x.rows());
  Eigen::MatrixXd jacobian(x.rows(), model.NumParameters());
  model.EvaluateWithJacobian(x, p.data(), values.data(), jacobian.data());
  return jacobian;
}

// Central differences refined by one Richardson step: error O(h^4).
Eigen::MatrixXd FiniteDifferenceJacobian(const Model& model, const Eigen::MatrixXd& x,
                                         const std::vector<double>& p) {
  Eigen::MatrixXd jacobian(x.rows(), model.NumParameters());
  for (int j = 0; j < model.NumParameters(); ++j) {
    const double h = kStepFraction * std::max(std::abs(p[j]), 1.0);
    auto central = [&](double step) {
      std::vector<double> plus = p, minus = p;
      plus[j] += step;
      minus[j] -= step;
      return Eigen::VectorXd((Values(model, x, plus) - Values(model, x, minus)) / (2 * step));
    };
    jacobian.col(j) = (4.0 * central(h / 2) - central(h)) / 3.0;
  }
  return jacobian;
}

double Evaluate1(const Model& model, double x, const std::vector<double>& p) {
  Eigen::MatrixXd xs(1, 1);
  xs(0, 0) = x;
  return Values(model, xs, p)(0);
}

TEST_CASE("FamilyModels: analytic Jacobian agrees with central differences", "[engine]") {
  unsigned seed = 7;
  for (const FamilyCase& c : AllCases()) {
    const std::unique_ptr<Model> model = c.make();
    for (const std::vector<double>& p : c.parameter_sets) {
      REQUIRE(static_cast<int>(p.size()) == model->NumParameters());
      const Eigen::MatrixXd x = RandomPoints(c.x_low, c.x_high, ++seed);
      const Eigen::MatrixXd analytic = Jacobian(*model, x, p);
      const Eigen::MatrixXd numeric = FiniteDifferenceJacobian(*model, x, p);
      for (int j = 0; j < model->NumParameters(); ++j) {
        const double column_max = analytic.col(j).cwiseAbs().maxCoeff();
        for (int i = 0; i < x.rows(); ++i) {
          const double scale = std::max(
              {std::abs(analytic(i, j)), kColumnFloorFraction * column_max, kAbsoluteFloor});
          INFO(c.name << " parameter " << model->ParameterNames()[j] << " x = " << x(i, 0)
                      << " analytic " << analytic(i, j) << " numeric " << numeric(i, j));
          CHECK(std::abs(analytic(i, j) - numeric(i, j)) <= kJacobianRelativeTolerance * scale);
        }
      }
    }
  }
}

TEST_CASE("FamilyModels: both evaluation paths give bit-identical values", "[engine]") {
  for (const FamilyCase& c : AllCases()) {
    const std::unique_ptr<Model> model = c.make();
    const Eigen::MatrixXd x = RandomPoints(c.x_low, c.x_high, 11);
    for (const std::vector<double>& p : c.parameter_sets) {
      Eigen::VectorXd with_jacobian(x.rows());
      Eigen::MatrixXd jacobian(x.rows(), model->NumParameters());
      model->EvaluateWithJacobian(x, p.data(), with_jacobian.data(), jacobian.data());
      INFO(c.name);
      CHECK((Values(*model, x, p).array() == with_jacobian.array()).all());
      CHECK(jacobian.allFinite());
    }
  }
}

TEST_CASE("FamilyModels: evaluation allocates nothing on the heap", "[engine]") {
  for (const FamilyCase& c : AllCases()) {
    const std::unique_ptr<Model> model = c.make();
    const Eigen::MatrixXd x = RandomPoints(c.x_low, c.x_high, 13);
    const std::vector<double>& p = c.parameter_sets.front();
    Eigen::VectorXd values(x.rows());
    Eigen::MatrixXd jacobian(x.rows(), model->NumParameters());
    const long before = testing::NumAllocations();
    model->Evaluate(x, p.data(), values.data());
    model->EvaluateWithJacobian(x, p.data(), values.data(), jacobian.data());
    const long after = testing::NumAllocations();
    INFO(c.name);
    CHECK(after == before);
  }
}

TEST_CASE("FamilyModels: declared linear parameters enter jointly linearly", "[engine]") {
  std::mt19937 random(17);
  std::normal_distribution<double> normal(0.0, 1.0);
  for (const FamilyCase& c : AllCases()) {
    const std::unique_ptr<Model> model = c.make();
    const std::vector<int> linear = model->LinearParameters();
    const Eigen::MatrixXd x = RandomPoints(c.x_low, c.x_high, 19);
    for (const std::vector<double>& p : c.parameter_sets) {
      // f(p + delta) = f(p) + J delta exactly when delta only moves linear parameters.
      std::vector<double> moved = p;
      Eigen::VectorXd delta = Eigen::VectorXd::Zero(model->NumParameters());
      for (int j : linear) {
        delta(j) = normal(random) * (1 + std::abs(p[j]));
        moved[j] += delta(j);
      }
      const Eigen::VectorXd predicted = Values(*model, x, p) + Jacobian(*model, x, p) * delta;
      const Eigen::VectorXd actual = Values(*model, x, moved);
      INFO(c.name);
      CHECK((actual - predicted).cwiseAbs().maxCoeff() <=
            1e-10 * (1 + actual.cwiseAbs().maxCoeff()));
    }
  }
}

TEST_CASE("FamilyModels: Clone gives an equal, independent model", "[engine]") {
  for (const FamilyCase& c : AllCases()) {
    const std::unique_ptr<Model> model = c.make();
    const std::unique_ptr<Model> clone = model->Clone();
    INFO(c.name);
    REQUIRE(clone != nullptr);
    CHECK(clone.get() != model.get());
    CHECK(clone->ParameterNames() == model->ParameterNames());
    CHECK(clone->PredictorNames() == std::vector<std::string>{"x"});
    CHECK(clone->LinearParameters() == model->LinearParameters());
    const Eigen::MatrixXd x = RandomPoints(c.x_low, c.x_high, 23);
    const std::vector<double>& p = c.parameter_sets.back();
    CHECK((Values(*clone, x, p).array() == Values(*model, x, p).array()).all());
  }
}

TEST_CASE("FamilyModels: values at hand-computed points", "[engine]") {
  const double e = std::exp(1.0);
  CHECK(Evaluate1(LineModel(), 3, {2, -1}) == Approx(5).epsilon(kValueTolerance));
  CHECK(Evaluate1(PolynomialModel(3), 2, {1, -1, 0.5, 2}) ==
        Approx(1 - 2 + 2 + 16).epsilon(kValueTolerance));
  // gaussian: height + baseline at the center, height/sqrt(e) + baseline one sigma away.
  CHECK(Evaluate1(GaussianModel(), 5, {3, 5, 1.2, 0.5}) == Approx(3.5).epsilon(kValueTolerance));
  CHECK(Evaluate1(GaussianModel(), 6.2, {3, 5, 1.2, 0.5}) ==
        Approx(3 / std::sqrt(e) + 0.5).epsilon(kValueTolerance));
  CHECK(Evaluate1(LorentzianModel(), 5, {3, 5, 1.2, 0.5}) == Approx(3.5).epsilon(kValueTolerance));
  // logistic4 at log_ec50 is the midpoint, whatever the hill slope.
  for (double hill : {-2.0, 0.7, 3.0}) {
    CHECK(Evaluate1(Logistic4Model(), -6, {10, 90, -6, hill}) ==
          Approx(50).epsilon(kValueTolerance));
  }
  // logistic5 at log_ec50: bottom + (top - bottom)*2^-asymmetry.
  CHECK(Evaluate1(Logistic5Model(), -6, {10, 90, -6, 1.3, 2}) ==
        Approx(10 + 80 / 4.0).epsilon(kValueTolerance));
  CHECK(Evaluate1(ExpDecayModel(), 2, {5, 2, 0.5}) == Approx(5 / e + 0.5).epsilon(kValueTolerance));
  CHECK(Evaluate1(BiexpDecayModel(), 0, {5, 0.5, 2, 4, 0.1}) ==
        Approx(7.1).epsilon(kValueTolerance));
  CHECK(Evaluate1(StretchedExpModel(), 2, {5, 2, 0.6, 0.1}) ==
        Approx(5 / e + 0.1).epsilon(kValueTolerance));
  CHECK(Evaluate1(StretchedExpModel(), 0, {5, 2, 0.6, 0.1}) ==
        Approx(5.1).epsilon(kValueTolerance));
  CHECK(Evaluate1(MichaelisMentenModel(), 2, {10, 2}) == Approx(5).epsilon(kValueTolerance));
  CHECK(Evaluate1(HillBindingModel(), 3, {8, 3, 2.5}) == Approx(4).epsilon(kValueTolerance));
  CHECK(Evaluate1(HillBindingModel(), 0, {8, 3, 2.5}) == 0.0);
  CHECK(Evaluate1(PowerLawModel(), 1, {2.5, 1.7}) == Approx(2.5).epsilon(kValueTolerance));
  CHECK(Evaluate1(PowerLawModel(), 4, {2.5, 0.5}) == Approx(5).epsilon(kValueTolerance));
  CHECK(Evaluate1(SineModel(), 0, {2, 0.3, 0.5, 1}) ==
        Approx(2 * std::sin(0.5) + 1).epsilon(kValueTolerance));
  CHECK(Evaluate1(SineModel(), 1.0 / 0.3 / 4, {2, 0.3, 0, 1}) ==
        Approx(3).epsilon(kValueTolerance));  // a quarter period: the crest
  CHECK(Evaluate1(DampedSineModel(), 3, {2, 3, 0.25, 0, 1}) ==
        Approx(2 / e * std::sin(1.5 * std::acos(-1.0)) + 1).epsilon(kValueTolerance));
  // gompertz at x = displacement/rate: asymptote/e, the inflection.
  CHECK(Evaluate1(GompertzModel(), 2.5, {10, 2, 0.8}) == Approx(10 / e).epsilon(kValueTolerance));
  // arrhenius at x = ea/R: prefactor/e.
  CHECK(Evaluate1(ArrheniusModel(), 5e4 / kGasConstant, {1e6, 5e4}) ==
        Approx(1e6 / e).epsilon(kValueTolerance));
}

TEST_CASE("FamilyModels: a multi-peak model is the sum of its single peaks", "[engine]") {
  const Eigen::MatrixXd x = RandomPoints(0, 10, 37);
  const std::vector<double> peaks = {3, 2, 0.5, -1, 5, 1.5, 2, 8, 0.7, 0.3};
  const MultiGaussianModel gaussians(3);
  const MultiLorentzianModel lorentzians(3);
  Eigen::VectorXd gaussian_sum = Eigen::VectorXd::Constant(x.rows(), peaks[9]);
  Eigen::VectorXd lorentzian_sum = gaussian_sum;
  for (int k = 0; k < 3; ++k) {
    const std::vector<double> single = {peaks[3 * k], peaks[3 * k + 1], peaks[3 * k + 2], 0};
    gaussian_sum += Values(GaussianModel(), x, single);
    lorentzian_sum += Values(LorentzianModel(), x, single);
  }
  CHECK((Values(gaussians, x, peaks) - gaussian_sum).cwiseAbs().maxCoeff() <= kValueTolerance);
  CHECK((Values(lorentzians, x, peaks) - lorentzian_sum).cwiseAbs().maxCoeff() <= kValueTolerance);
  // pseudo_voigt at eta = 0 and 1 is the gaussian and lorentzian of the same FWHM.
  const double fwhm = 1.5;
  const double sigma = fwhm / (2 * std::sqrt(2 * kLn2));
  CHECK((Values(PseudoVoigtModel(), x, {3, 5, fwhm, 0, 0.2}) -
         Values(GaussianModel(), x, {3, 5, sigma, 0.2}))
            .cwiseAbs()
            .maxCoeff() <= kValueTolerance);
  CHECK((Values(PseudoVoigtModel(), x, {3, 5, fwhm, 1, 0.2}) -
         Values(LorentzianModel(), x, {3, 5, fwhm / 2, 0.2}))
            .cwiseAbs()
            .maxCoeff() <= kValueTolerance);
}

TEST_CASE("FamilyModels: pseudo_voigt is at half height at center +- fwhm/2 for every eta",
          "[engine]") {
  const PseudoVoigtModel model;
  const double height = 4, center = 3, fwhm = 1.5, baseline = 0.7;
  for (double eta : {0.0, 0.25, 0.5, 0.8, 1.0}) {
    const std::vector<double> p = {height, center, fwhm, eta, baseline};
    INFO("eta = " << eta);
    CHECK(Evaluate1(model, center, p) == Approx(height + baseline).epsilon(kValueTolerance));
    for (double side : {-1.0, 1.0}) {
      CHECK(Evaluate1(model, center + side * fwhm / 2, p) ==
            Approx(height / 2 + baseline).epsilon(kValueTolerance));
    }
  }
}

TEST_CASE("FamilyModels: published peak width relations", "[engine]") {
  // Gaussian FWHM = 2*sqrt(2 ln 2)*sigma, about 2.354*sigma (Bevington & Robinson, "Data
  // Reduction and Error Analysis for the Physical Sciences", 3rd ed., ch. 2; quoted from
  // memory, to the book's four digits).
  const double gaussian_fwhm_factor = 2 * std::sqrt(2 * kLn2);
  CHECK(gaussian_fwhm_factor == Approx(2.354).margin(1e-3));
  const double height = 3, center = 5, sigma = 1.2, baseline = 0.5;
  const std::vector<double> g = {height, center, sigma, baseline};
  for (double side : {-1.0, 1.0}) {
    CHECK(Evaluate1(GaussianModel(), center + side * gaussian_fwhm_factor * sigma / 2, g) ==
          Approx(height / 2 + baseline).epsilon(kValueTolerance));
  }
  // Lorentzian (Cauchy) FWHM = 2*hwhm: the scale parameter is the half width at half maximum.
  const double hwhm = 0.8;
  const std::vector<double> l = {height, center, hwhm, baseline};
  for (double side : {-1.0, 1.0}) {
    CHECK(Evaluate1(LorentzianModel(), center + side * hwhm, l) ==
          Approx(height / 2 + baseline).epsilon(kValueTolerance));
  }
}

TEST_CASE("FamilyModels: undefined points and parameters give NaN", "[engine]") {
  CHECK(std::isnan(Evaluate1(PowerLawModel(), -2, {1.5, 0.5})));
  CHECK(Evaluate1(PowerLawModel(), -2, {1.5, 2}) == Approx(6).epsilon(kValueTolerance));
  CHECK(Evaluate1(PowerLawModel(), 0, {1.5, 2}) == 0.0);
  CHECK(std::isnan(Evaluate1(HillBindingModel(), -1, {8, 3, 2.5})));
  CHECK(std::isnan(Evaluate1(StretchedExpModel(), -1, {5, 2, 0.6, 0.1})));
  CHECK(std::isnan(Evaluate1(ArrheniusModel(), 0, {1e6, 5e4})));
  CHECK(std::isnan(Evaluate1(ArrheniusModel(), -300, {1e6, 5e4})));

  // Scale parameters of exactly 0 leave the whole model undefined.
  struct ZeroCase {
    std::unique_ptr<Model> model;
    std::vector<double> p;
  };
  std::vector<ZeroCase> zero_cases;
  zero_cases.push_back({std::make_unique<GaussianModel>(), {3, 5, 0, 0.5}});
  zero_cases.push_back({std::make_unique<LorentzianModel>(), {3, 5, 0, 0.5}});
  zero_cases.push_back({std::make_unique<PseudoVoigtModel>(), {3, 5, 0, 0.5, 0}});
  zero_cases.push_back({std::make_unique<MultiGaussianModel>(2), {3, 5, 1, 2, 6, 0, 0.5}});
  zero_cases.push_back({std::make_unique<MultiLorentzianModel>(2), {3, 5, 0, 2, 6, 1, 0.5}});
  zero_cases.push_back({std::make_unique<ExpDecayModel>(), {5, 0, 1}});
  zero_cases.push_back({std::make_unique<BiexpDecayModel>(), {5, 1, 2, 0, 1}});
  zero_cases.push_back({std::make_unique<StretchedExpModel>(), {5, 0, 0.5, 1}});
  zero_cases.push_back({std::make_unique<DampedSineModel>(), {5, 0, 0.5, 1, 0}});
  zero_cases.push_back({std::make_unique<MichaelisMentenModel>(), {5, 0}});
  zero_cases.push_back({std::make_unique<HillBindingModel>(), {5, 0, 1}});
  const Eigen::MatrixXd x = RandomPoints(0.5, 10, 29);
  for (const ZeroCase& c : zero_cases) {
    Eigen::VectorXd values(x.rows());
    Eigen::MatrixXd jacobian(x.rows(), c.model->NumParameters());
    c.model->EvaluateWithJacobian(x, c.p.data(), values.data(), jacobian.data());
    INFO(c.model->ParameterNames().front() << " model with " << c.p.size() << " parameters");
    CHECK(values.array().isNaN().all());
    CHECK(jacobian.array().isNaN().all());
    CHECK(Values(*c.model, x, c.p).array().isNaN().all());
  }
}

TEST_CASE("FamilyModels: limits at x = 0 replace the indeterminate forms", "[engine]") {
  Eigen::MatrixXd x(1, 1);
  x(0, 0) = 0.0;
  auto jacobian_at_zero = [&x](const Model& model, const std::vector<double>& p) {
    Eigen::VectorXd values(1);
    Eigen::MatrixXd jacobian(1, model.NumParameters());
    model.EvaluateWithJacobian(x, p.data(), values.data(), jacobian.data());
    return std::make_pair(values(0), Eigen::VectorXd(jacobian.row(0).transpose()));
  };
  // stretched_exp: (x/tau)^beta and its beta derivative (x/tau)^beta ln(x/tau) vanish.
  const auto [stretched, d_stretched] = jacobian_at_zero(StretchedExpModel(), {5, 2, 0.6, 0.1});
  CHECK(stretched == 5.1);
  CHECK(d_stretched(0) == 1.0);
  CHECK(d_stretched(1) == 0.0);
  CHECK(d_stretched(2) == 0.0);
  CHECK(d_stretched(3) == 1.0);
  // hill_binding: no binding and no sensitivity at zero ligand for n > 0.
  const auto [hill, d_hill] = jacobian_at_zero(HillBindingModel(), {8, 3, 2.5});
  CHECK(hill == 0.0);
  CHECK((d_hill.array() == 0.0).all());
  // power_law with exponent > 0: x^k ln x -> 0.
  const auto [power, d_power] = jacobian_at_zero(PowerLawModel(), {2, 1.5});
  CHECK(power == 0.0);
  CHECK((d_power.array() == 0.0).all());
  // power_law with exponent <= 0 has no finite exponent derivative at 0.
  CHECK(std::isnan(jacobian_at_zero(PowerLawModel(), {2, -0.5}).second(1)));
}

TEST_CASE("FamilyModels: steep curves stay finite far from their midpoint", "[engine]") {
  Eigen::MatrixXd x(4, 1);
  x << -400, -1, 1, 400;
  const std::vector<std::pair<std::unique_ptr<Model>, std::vector<double>>> cases = [] {
    std::vector<std::pair<std::unique_ptr<Model>, std::vector<double>>> list;
    list.emplace_back(std::make_unique<Logistic4Model>(), std::vector<double>{0, 1, 0, 50});
    list.emplace_back(std::make_unique<Logistic5Model>(), std::vector<double>{0, 1, 0, 50, 2});
    list.emplace_back(std::make_unique<GompertzModel>(), std::vector<double>{1, 0, 3});
    return list;
  }();
  for (const auto& [model, p] : cases) {
    Eigen::VectorXd values(x.rows());
    Eigen::MatrixXd jacobian(x.rows(), model->NumParameters());
    model->EvaluateWithJacobian(x, p.data(), values.data(), jacobian.data());
    INFO(model->ParameterNames().front());
    CHECK(values.allFinite());
    CHECK(jacobian.allFinite());
  }
}

// Applies a permutation of members to a parameter vector.
std::vector<double> PermuteMembers(const std::vector<double>& p, const PermutationSymmetry& s,
                                   const std::vector<int>& order) {
  std::vector<double> permuted = p;
  for (size_t g = 0; g < s.members.size(); ++g) {
    for (size_t k = 0; k < s.members[g].size(); ++k) {
      permuted[s.members[g][k]] = p[s.members[order[g]][k]];
    }
  }
  return permuted;
}

TEST_CASE("FamilyModels: permuting symmetric members leaves the values unchanged", "[engine]") {
  struct SymmetryCase {
    std::unique_ptr<Model> model;
    std::vector<double> p;
    int num_members;
  };
  std::vector<SymmetryCase> cases;
  cases.push_back(
      {std::make_unique<MultiGaussianModel>(3), {3, 2, 0.5, 2, 5, 1, 1, 8, 0.7, 0.3}, 3});
  cases.push_back(
      {std::make_unique<MultiLorentzianModel>(3), {3, 2, 0.5, 2, 5, 1, 1, 8, 0.7, 0.3}, 3});
  cases.push_back({std::make_unique<BiexpDecayModel>(), {5, 0.5, 2, 4, 0.1}, 2});
  const Eigen::MatrixXd x = RandomPoints(0, 10, 31);
  for (const SymmetryCase& c : cases) {
    const std::vector<PermutationSymmetry> symmetries = c.model->Symmetries();
    REQUIRE(symmetries.size() == 1);
    const PermutationSymmetry& s = symmetries.front();
    REQUIRE(static_cast<int>(s.members.size()) == c.num_members);
    // Members have one length, disjoint in-range indices, and matching names up to the index.
    std::vector<int> seen;
    const std::vector<std::string>& names = c.model->ParameterNames();
    for (const std::vector<int>& member : s.members) {
      REQUIRE(member.size() == s.members.front().size());
      for (size_t k = 0; k < member.size(); ++k) {
        REQUIRE(member[k] >= 0);
        REQUIRE(member[k] < c.model->NumParameters());
        seen.push_back(member[k]);
        auto stem = [](std::string name) {
          while (!name.empty() && std::isdigit(static_cast<unsigned char>(name.back()))) {
            name.pop_back();
          }
          return name;
        };
        CHECK(stem(names[member[k]]) == stem(names[s.members.front()[k]]));
      }
    }
    std::sort(seen.begin(), seen.end());
    CHECK(std::adjacent_find(seen.begin(), seen.end()) == seen.end());
    REQUIRE(s.sort_position >= 0);
    REQUIRE(s.sort_position < static_cast<int>(s.members.front().size()));
    const std::string sort_stem = names[s.members.front()[s.sort_position]];
    CHECK((sort_stem.rfind("center", 0) == 0 || sort_stem.rfind("tau", 0) == 0));

    std::vector<int> order(c.num_members);
    for (int g = 0; g < c.num_members; ++g) order[g] = g;
    const Eigen::VectorXd reference = Values(*c.model, x, c.p);
    while (std::next_permutation(order.begin(), order.end())) {
      const Eigen::VectorXd permuted = Values(*c.model, x, PermuteMembers(c.p, s, order));
      CHECK((permuted - reference).cwiseAbs().maxCoeff() <=
            kValueTolerance * (1 + reference.cwiseAbs().maxCoeff()));
    }
  }
  CHECK(MultiGaussianModel(1).Symmetries().empty());
  CHECK(GaussianModel().Symmetries().empty());
}

TEST_CASE("FamilyModels: parameter names follow the catalogue table", "[engine]") {
  using Names = std::vector<std::string>;
  CHECK(LineModel().ParameterNames() == Names{"slope", "intercept"});
  CHECK(PolynomialModel(3).ParameterNames() == Names{"c0", "c1", "c2", "c3"});
  CHECK(GaussianModel().ParameterNames() == Names{"height", "center", "sigma", "baseline"});
  CHECK(LorentzianModel().ParameterNames() == Names{"height", "center", "hwhm", "baseline"});
  CHECK(PseudoVoigtModel().ParameterNames() ==
        Names{"height", "center", "fwhm", "eta", "baseline"});
  CHECK(MultiGaussianModel(2).ParameterNames() ==
        Names{"height1", "center1", "sigma1", "height2", "center2", "sigma2", "baseline"});
  CHECK(MultiLorentzianModel(2).ParameterNames() ==
        Names{"height1", "center1", "hwhm1", "height2", "center2", "hwhm2", "baseline"});
  CHECK(ExpDecayModel().ParameterNames() == Names{"amplitude", "tau", "baseline"});
  CHECK(BiexpDecayModel().ParameterNames() ==
        Names{"amplitude1", "tau1", "amplitude2", "tau2", "baseline"});
  CHECK(StretchedExpModel().ParameterNames() == Names{"amplitude", "tau", "beta", "baseline"});
  CHECK(Logistic4Model().ParameterNames() == Names{"bottom", "top", "log_ec50", "hill"});
  CHECK(Logistic5Model().ParameterNames() ==
        Names{"bottom", "top", "log_ec50", "hill", "asymmetry"});
  CHECK(MichaelisMentenModel().ParameterNames() == Names{"vmax", "km"});
  CHECK(HillBindingModel().ParameterNames() == Names{"bmax", "kd", "n"});
  CHECK(PowerLawModel().ParameterNames() == Names{"prefactor", "exponent"});
  CHECK(SineModel().ParameterNames() == Names{"amplitude", "frequency", "phase", "baseline"});
  CHECK(DampedSineModel().ParameterNames() ==
        Names{"amplitude", "tau", "frequency", "phase", "baseline"});
  CHECK(GompertzModel().ParameterNames() == Names{"asymptote", "displacement", "rate"});
  CHECK(ArrheniusModel().ParameterNames() == Names{"prefactor", "ea"});
}

// Reference library check: Debian python3-scipy 1.10 (scipy.stats distribution functions,
// scipy.special.expit, scipy.constants.R) under /usr/bin/python3. Each family's shape is a
// known distribution function up to scale: gaussian = norm.pdf, lorentzian = cauchy.pdf,
// exp_decay = expon.sf, stretched_exp = weibull_min.sf, hill_binding = fisk.cdf (the
// log-logistic), gompertz = gumbel_r.cdf with loc = displacement/rate, scale = 1/rate.
// Fails (never skips) when scipy is missing; scripts/setup.sh installs it.
constexpr const char* kScipyReference = "Debian python3-scipy (scipy.stats, scipy.special)";
constexpr double kScipyRelativeTolerance = 1e-11;

struct ScipyCase {
  std::string name;
  std::unique_ptr<Model> model;
  std::vector<double> p;
  double x_low;
  double x_high;
  std::string expression;  // numpy/scipy in x (array) and p (list)
};

std::string PythonList(const double* values, int n) {
  std::ostringstream out;
  out.precision(17);
  out << "[";
  for (int i = 0; i < n; ++i) out << (i ? ", " : "") << values[i];
  out << "]";
  return out.str();
}

TEST_CASE("FamilyModels: shapes agree with scipy distribution functions", "[engine]") {
  std::vector<ScipyCase> cases;
  cases.push_back({"gaussian",
                   std::make_unique<GaussianModel>(),
                   {3, 5, 1.2, 0.5},
                   0,
                   10,
                   "p[0]*stats.norm.pdf(x, p[1], p[2])*math.sqrt(2*math.pi)*p[2] + p[3]"});
  cases.push_back({"lorentzian",
                   std::make_unique<LorentzianModel>(),
                   {3, 5, 0.8, 0.5},
                   0,
                   10,
                   "p[0]*stats.cauchy.pdf(x, p[1], p[2])*math.pi*p[2] + p[3]"});
  // sigma of the Gaussian part = fwhm/(2 sqrt(2 ln 2)); hwhm of the Lorentzian = fwhm/2.
  cases.push_back(
      {"pseudo_voigt",
       std::make_unique<PseudoVoigtModel>(),
       {4, 5, 1.5, 0.3, 0.2},
       0,
       10,
       "p[0]*(p[3]*stats.cauchy.pdf(x, p[1], p[2]/2)*math.pi*p[2]/2 + (1-p[3])*"
       "stats.norm.pdf(x, p[1], p[2]/(2*math.sqrt(2*math.log(2))))*math.sqrt(2*math.pi)*"
       "p[2]/(2*math.sqrt(2*math.log(2)))) + p[4]"});
  cases.push_back({"exp_decay",
                   std::make_unique<ExpDecayModel>(),
                   {5, 2, 0.5},
                   0,
                   10,
                   "p[0]*stats.expon.sf(x, scale=p[1]) + p[2]"});
  cases.push_back({"biexp_decay",
                   std::make_unique<BiexpDecayModel>(),
                   {5, 0.5, 2, 4, 0.1},
                   0,
                   10,
                   "p[0]*stats.expon.sf(x, scale=p[1]) + p[2]*stats.expon.sf(x, scale=p[3]) "
                   "+ p[4]"});
  cases.push_back({"stretched_exp",
                   std::make_unique<StretchedExpModel>(),
                   {5, 2, 0.6, 0.1},
                   0,
                   10,
                   "p[0]*stats.weibull_min.sf(x, p[2], scale=p[1]) + p[3]"});
  cases.push_back({"logistic4",
                   std::make_unique<Logistic4Model>(),
                   {10, 90, -6, 1.3},
                   -9,
                   -3,
                   "p[0] + (p[1]-p[0])*special.expit(math.log(10)*p[3]*(x - p[2]))"});
  cases.push_back({"logistic5",
                   std::make_unique<Logistic5Model>(),
                   {10, 90, -6, 1.3, 0.4},
                   -9,
                   -3,
                   "p[0] + (p[1]-p[0])*special.expit(math.log(10)*p[3]*(x - p[2]))**p[4]"});
  cases.push_back({"hill_binding",
                   std::make_unique<HillBindingModel>(),
                   {8, 3, 2.5},
                   0.05,
                   20,
                   "p[0]*stats.fisk.cdf(x, p[2], scale=p[1])"});
  cases.push_back({"gompertz",
                   std::make_unique<GompertzModel>(),
                   {10, 2, 0.8},
                   0,
                   10,
                   "p[0]*stats.gumbel_r.cdf(x, loc=p[1]/p[2], scale=1/p[2])"});
  cases.push_back({"arrhenius",
                   std::make_unique<ArrheniusModel>(),
                   {1e6, 5e4},
                   250,
                   600,
                   "p[0]*np.exp(-p[1]/(constants.R*x))"});

  constexpr int kNumPoints = 17;
  std::ostringstream script;
  script << "import math\nimport numpy as np\nfrom scipy import stats, special, constants\n"
         << "print('R', repr(float(constants.R)))\n";
  std::map<std::string, Eigen::MatrixXd> grids;
  for (const ScipyCase& c : cases) {
    Eigen::MatrixXd x = Eigen::VectorXd::LinSpaced(kNumPoints, c.x_low, c.x_high);
    script << "x = np.array(" << PythonList(x.data(), kNumPoints) << ")\n"
           << "p = " << PythonList(c.p.data(), static_cast<int>(c.p.size())) << "\n"
           << "print('" << c.name << "', *[repr(float(v)) for v in (" << c.expression << ")])\n";
    grids[c.name] = x;
  }
  const std::filesystem::path path =
      std::filesystem::temp_directory_path() /
      ("foothold_family_scipy_" + std::to_string(::getpid()) + ".py");
  { std::ofstream(path) << script.str(); }
  FILE* pipe = ::popen(("/usr/bin/python3 " + path.string() + " 2>&1").c_str(), "r");
  REQUIRE(pipe != nullptr);
  std::string output;
  char buffer[4096];
  while (std::fgets(buffer, sizeof(buffer), pipe) != nullptr) output += buffer;
  const int status = ::pclose(pipe);
  std::filesystem::remove(path);
  INFO(kScipyReference << " output:\n" << output);
  REQUIRE(status == 0);

  std::map<std::string, std::vector<double>> reference;
  std::istringstream lines(output);
  std::string line;
  while (std::getline(lines, line)) {
    std::istringstream fields(line);
    std::string name;
    fields >> name;
    double v;
    while (fields >> v) reference[name].push_back(v);
  }
  REQUIRE(reference["R"].size() == 1);
  CHECK(kGasConstant == Approx(reference["R"][0]).epsilon(1e-10));
  for (const ScipyCase& c : cases) {
    INFO(c.name << " against " << kScipyReference);
    const std::vector<double>& expected = reference[c.name];
    REQUIRE(expected.size() == static_cast<size_t>(kNumPoints));
    const Eigen::VectorXd values = Values(*c.model, grids[c.name], c.p);
    const double scale = values.cwiseAbs().maxCoeff();
    for (int i = 0; i < kNumPoints; ++i) {
      INFO("x = " << grids[c.name](i, 0) << " foothold " << values(i) << " scipy " << expected[i]);
      CHECK(std::abs(values(i) - expected[i]) <=
            kScipyRelativeTolerance * std::max(std::abs(expected[i]), 1e-3 * scale));
    }
  }
}

}  // namespace
}  // namespace foothold
