// The 27 NIST StRD nonlinear regression models written as expressions: the residual sum
// of squares at the certified parameters reproduces NIST's certified value, and the tape's
// Jacobian agrees with central differences there. Source: NIST Statistical Reference
// Datasets, nonlinear regression (tests/data/nist-strd, read by the certification loader).
#include <catch2/catch.hpp>
#include <cmath>
#include <limits>

#include "engine/model/expression_model.h"
#include "tests/certification/nist_strd.h"

namespace foothold {
namespace {

constexpr int kCertifiedDigits = 6;
// Central differences at the certified optimum (see expression_model_test.cpp).
constexpr double kGradientTolerance = 1e-6;

// Log relative error: the number of agreeing significant digits.
double LogRelativeError(double value, double certified) {
  if (value == certified) return 17.0;
  return -std::log10(std::abs(value - certified) / std::abs(certified));
}

std::vector<certification::NistProblem> LoadProblems() {
  std::vector<certification::NistProblem> problems;
  std::string error;
  INFO(error);
  REQUIRE(certification::LoadNistProblems(FOOTHOLD_NIST_DIR, &problems, &error));
  REQUIRE(problems.size() == 27);
  return problems;
}

TEST_CASE("ExpressionModel: NIST StRD models reproduce the certified residual sum of squares",
          "[engine]") {
  for (const certification::NistProblem& problem : LoadProblems()) {
    INFO(problem.name << ": " << problem.model);
    std::string error;
    auto model = ParseExpressionModel(problem.model, problem.predictors, problem.ParameterNames(),
                                      ExpressionOptions(), &error);
    INFO(error);
    REQUIRE(model);
    REQUIRE(model->NumParameters() == problem.num_params);
    Dataset data;
    REQUIRE(certification::BuildNistDataset(problem, &data, &error));
    REQUIRE(model->PredictorNames() == data.predictor_names);

    const int n = data.NumPoints();
    Eigen::VectorXd values(n);
    Eigen::MatrixXd jacobian(n, problem.num_params);
    model->EvaluateWithJacobian(data.predictors, problem.certified.data(), values.data(),
                                jacobian.data());
    const double rss = (data.response - values).squaredNorm();
    // Lanczos1's certified RSS (1.4e-25) sits below the rounding of the published
    // 11-digit parameters; the residuals there are pure rounding noise.
    if (problem.certified_rss > 1e-20) {
      CHECK(LogRelativeError(rss, problem.certified_rss) >= kCertifiedDigits);
    } else {
      CHECK(rss < 1e-20);
    }

    for (int j = 0; j < problem.num_params; ++j) {
      std::vector<double> up = problem.certified, down = problem.certified;
      const double step = std::cbrt(std::numeric_limits<double>::epsilon()) *
                          std::max(std::abs(problem.certified[j]), 1e-300);
      up[j] += step;
      down[j] -= step;
      Eigen::VectorXd f_up(n), f_down(n);
      model->Evaluate(data.predictors, up.data(), f_up.data());
      model->Evaluate(data.predictors, down.data(), f_down.data());
      const Eigen::VectorXd numeric = (f_up - f_down) / (up[j] - down[j]);
      const double scale = std::max(jacobian.col(j).cwiseAbs().maxCoeff(), 1e-300);
      INFO("b" << j + 1);
      CHECK((jacobian.col(j) - numeric).cwiseAbs().maxCoeff() <= kGradientTolerance * scale);
    }
  }
}

TEST_CASE("ExpressionModel: linear parameters of NIST StRD models", "[engine]") {
  using V = std::vector<int>;
  for (const certification::NistProblem& problem : LoadProblems()) {
    auto model = ParseExpressionModel(problem.model, problem.predictors, problem.ParameterNames(),
                                      ExpressionOptions(), nullptr);
    REQUIRE(model);
    INFO(problem.name << ": " << problem.model);
    const V linear = model->LinearParameters();
    if (problem.name.rfind("Lanczos", 0) == 0) CHECK(linear == V{0, 2, 4});
    if (problem.name.rfind("Gauss", 0) == 0) CHECK(linear == V{0, 2, 5});
    if (problem.name == "ENSO") CHECK(linear == V{0, 1, 2, 4, 5, 7, 8});
    if (problem.name == "MGH17") CHECK(linear == V{0, 1, 2});
    if (problem.name == "Misra1a" || problem.name == "DanWood") CHECK(linear == V{0});
    if (problem.name == "Roszman1") CHECK(linear == V{0, 1});
    // Rational models: the numerator coefficients are linear, the denominator's are not.
    if (problem.name == "Thurber" || problem.name == "Hahn1") CHECK(linear == V{0, 1, 2, 3});
    if (problem.name == "Kirby2") CHECK(linear == V{0, 1, 2});
    if (problem.name == "Eckerle4") CHECK(linear == V{0});
  }
}

}  // namespace
}  // namespace foothold
