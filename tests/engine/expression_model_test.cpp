// Forward-mode derivatives, constant folding, linear parameters, columns and clones of
// expression models.
#include "engine/model/expression_model.h"

#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <limits>
#include <random>
#include <string>
#include <thread>
#include <vector>

#include "engine/model/internal/expression_compile.h"

namespace foothold {
namespace {

// Central differences with step h = cbrt(eps) * max(|p|, 1) have truncation error
// O(h^2) and rounding error O(eps / h), both near 1e-11 relative; 1e-6 leaves margin.
constexpr double kGradientTolerance = 1e-6;
// Folding reorders nothing, so folded and unfolded tapes agree to the last bits.
constexpr double kFoldingTolerance = 1e-15;

std::unique_ptr<ExpressionModel> Parse(const std::string& text,
                                       const std::vector<std::string>& columns = {"x"}) {
  std::string error;
  auto model = ParseExpressionModel(text, columns, {}, ExpressionOptions(), &error);
  INFO(text << ": " << error);
  REQUIRE(model);
  return model;
}

struct GradientCase {
  std::string text;
  // Parameters and x are drawn uniformly from these ranges (the function's domain).
  double parameter_low;
  double parameter_high;
  double x_low;
  double x_high;
};

// Compares the tape's Jacobian with central differences of Evaluate() at random points.
void CheckGradient(const GradientCase& c, std::mt19937* random) {
  const auto model = Parse(c.text);
  const int n = 6;
  const int p = model->NumParameters();
  std::uniform_real_distribution<double> draw_parameter(c.parameter_low, c.parameter_high);
  std::uniform_real_distribution<double> draw_x(c.x_low, c.x_high);
  Eigen::MatrixXd x(n, static_cast<Eigen::Index>(model->PredictorNames().size()));
  for (Eigen::Index i = 0; i < x.size(); ++i) x.data()[i] = draw_x(*random);
  std::vector<double> params(p);
  for (double& value : params) value = draw_parameter(*random);

  Eigen::VectorXd values(n), values_only(n);
  Eigen::MatrixXd jacobian(n, p);
  model->EvaluateWithJacobian(x, params.data(), values.data(), jacobian.data());
  model->Evaluate(x, params.data(), values_only.data());
  INFO(c.text);
  // Both entry points compute the values with the same arithmetic.
  CHECK((values.array() == values_only.array()).all());
  for (int j = 0; j < p; ++j) {
    const double step =
        std::cbrt(std::numeric_limits<double>::epsilon()) * std::max(std::abs(params[j]), 1.0);
    std::vector<double> up = params, down = params;
    up[j] += step;
    down[j] -= step;
    Eigen::VectorXd f_up(n), f_down(n);
    model->Evaluate(x, up.data(), f_up.data());
    model->Evaluate(x, down.data(), f_down.data());
    for (int i = 0; i < n; ++i) {
      const double numeric = (f_up[i] - f_down[i]) / (up[j] - down[j]);
      const double analytic = jacobian(i, j);
      INFO("parameter " << model->ParameterNames()[j] << " = " << params[j] << ", point " << i
                        << ": analytic " << analytic << ", central difference " << numeric);
      REQUIRE(std::isfinite(analytic));
      CHECK(std::abs(analytic - numeric) <=
            kGradientTolerance * std::max({std::abs(analytic), std::abs(numeric), 1e-8}));
    }
  }
}

TEST_CASE("ExpressionModel: derivatives of every operator agree with central differences",
          "[engine]") {
  std::mt19937 random(20261201);
  const std::vector<GradientCase> cases = {
      {"a + b*x", -2, 2, -3, 3},
      {"a - b*x", -2, 2, -3, 3},
      {"a*b*x", -2, 2, -3, 3},
      {"-a*x + +b", -2, 2, -3, 3},
      {"a/x", 0.5, 2, 1, 3},            // scalar / vector
      {"x/a", 0.5, 2, -3, 3},           // vector / scalar
      {"(a*x)/(b + x)", 0.5, 2, 1, 3},  // vector / vector
      {"a/b*x + a*b", 0.5, 2, -3, 3},   // scalar / scalar, scalar result terms
      {"(a*x)^2", -2, 2, -3, 3},
      {"(a*x)^3", -2, 2, -3, 3},
      {"(a*x)^(-2)", 0.5, 2, 1, 3},
      {"(a*x - 5)^(-3)", 0.5, 2, 1, 2},           // negative base, negative integer exponent
      {"(1 + b2*x/2)^(-2)", -3, -2, 2, 3},        // negative base 1 + b2 x / 2 in [-3.5, -1]
      {"(a*x)^100 * 1e-20", 0.9, 1.1, 0.9, 1.1},  // std::pow with an integer exponent
      {"(a*x)^0.5", 0.5, 2, 1, 3},
      {"(a*x)^2.5", 0.5, 2, 1, 3},
      {"(a*x)^(-1.5)", 0.5, 2, 1, 3},
      {"(a*x)^b", 0.5, 2, 1, 3},  // parameter exponent: exp(b log a)
      {"x^b", 0.5, 2, 1, 3},
      {"b^x", 0.5, 2, -2, 2},  // parameter base, column exponent: std::pow
      {"(a*x)^x", 0.5, 2, 1, 3},
      {"2^(a*x)", -1, 1, -2, 2},  // constant base, parameter exponent
      {"10^((c - x)*h)", -1, 1, -2, 2},
      {"exp(a*x + b)", -1, 1, -2, 2},
      {"log(a*x + b)", 0.5, 2, 1, 3},
      {"log10(a*x + b)", 0.5, 2, 1, 3},
      {"sqrt(a*x + b)", 0.5, 2, 1, 3},
      {"sin(a*x + b)", -2, 2, -3, 3},
      {"cos(a*x + b)", -2, 2, -3, 3},
      {"tan(a*x + b)", -0.3, 0.3, -1, 1},  // |a x + b| < 1.3 < pi/2
      {"atan(a*x + b)", -2, 2, -3, 3},
      {"tanh(a*x + b)", -1, 1, -2, 2},
      {"abs(a*x + b)", 1, 2, 1, 3},    // away from the kink at 0
      {"abs(a*x - b)", -2, -1, 1, 3},  // negative argument side
      {"erf(a*x + b)", -1, 1, -2, 2},
      {"h*exp(-(x - m)^2/(2*s^2)) + k", 0.5, 2, -2, 4},
      {"a*exp(-x/t) + b", 0.5, 2, 0, 3},
      {"exp(a)*x + b^2*c - sin(a*b)", -1, 1, -2, 2},  // scalar chains with derivatives
      // Sums whose derivatives are handed on from operand to result down to the output.
      {"h1*exp(-(x-m1)^2) + h2*exp(-(x-m2)^2) + h3*exp(-(x-m3)^2) + k", -1, 1, -2, 2},
      {"a*exp(-b*x) - c*exp(-d*x) + e - x*f", 0.5, 2, 0, 2},
      {"(a*x - b*x) - (c*x - d*x^2)", -2, 2, -3, 3},  // right-hand sides are negated
      {"a*x + (a*x + b*x)", -2, 2, -3, 3},            // both sides carry d/da
      {"exp(x) + a + b*x", -2, 2, -1, 1},             // a column-only vector term
      {"a", -2, 2, -3, 3},                            // the result is a parameter
      {"a*b", -2, 2, -3, 3},                          // the result is a scalar
      {"(a*x)^0 + b*x", -2, 2, -3, 3},                // a drops out: a zero column
  };
  for (const GradientCase& c : cases) CheckGradient(c, &random);
}

TEST_CASE("ExpressionModel: the Jacobian of a gaussian matches the closed form", "[engine]") {
  // d/dh = g, d/dm = h g (x-m)/s^2, d/ds = h g (x-m)^2/s^3 with g = exp(-(x-m)^2/(2 s^2)).
  const auto model = Parse("h*exp(-(x-m)^2/(2*s^2))");
  const double params[] = {3.0, 1.5, 0.7};
  Eigen::MatrixXd x(5, 1);
  x << -1.0, 0.5, 1.5, 2.0, 4.0;
  Eigen::VectorXd values(5);
  Eigen::MatrixXd jacobian(5, 3);
  model->EvaluateWithJacobian(x, params, values.data(), jacobian.data());
  for (int i = 0; i < 5; ++i) {
    const double d = x(i, 0) - params[1];
    const double g = std::exp(-d * d / (2 * params[2] * params[2]));
    CHECK(values[i] == Approx(params[0] * g).epsilon(1e-14));
    CHECK(jacobian(i, 0) == Approx(g).epsilon(1e-14));
    CHECK(jacobian(i, 1) == Approx(params[0] * g * d / (params[2] * params[2])).epsilon(1e-13));
    CHECK(jacobian(i, 2) ==
          Approx(params[0] * g * d * d / std::pow(params[2], 3)).epsilon(1e-13).margin(1e-300));
  }
}

TEST_CASE("ExpressionModel: constant folding leaves results unchanged", "[engine]") {
  const std::string text = "2*pi*x*a + sqrt(2)*b - 3^2*c/exp(1) + (1 + 2)^(-2)*x^2*b";
  std::string error;
  auto folded =
      internal::CompileExpressionModel(text, {"x"}, {}, ExpressionOptions(), true, &error);
  auto unfolded =
      internal::CompileExpressionModel(text, {"x"}, {}, ExpressionOptions(), false, &error);
  REQUIRE(folded);
  REQUIRE(unfolded);
  INFO(folded->ToString() << "---\n" << unfolded->ToString());
  CHECK(folded->NumInstructions() < unfolded->NumInstructions());
  const int n = 9;
  Eigen::MatrixXd x(n, 1);
  for (int i = 0; i < n; ++i) x(i, 0) = -2.0 + 0.5 * i;
  const double params[] = {0.3, -1.7, 2.2};
  Eigen::VectorXd v1(n), v2(n);
  Eigen::MatrixXd j1(n, 3), j2(n, 3);
  folded->EvaluateWithJacobian(x, params, v1.data(), j1.data());
  unfolded->EvaluateWithJacobian(x, params, v2.data(), j2.data());
  CHECK((v1 - v2).cwiseAbs().maxCoeff() <= kFoldingTolerance * v2.cwiseAbs().maxCoeff());
  CHECK((j1 - j2).cwiseAbs().maxCoeff() <= kFoldingTolerance * j2.cwiseAbs().maxCoeff());
  // A fully constant sub-tree becomes a single constant: "2*pi" costs no instruction.
  CHECK(Parse("2*pi*a")->NumInstructions() == 1);
  CHECK(Parse("-(2)*a")->NumInstructions() == 1);
}

TEST_CASE("ExpressionModel: powers with constant exponents are specialised", "[engine]") {
  CHECK(Parse("(a*x)^2")->ToString().find("square") != std::string::npos);
  CHECK(Parse("(a*x)^3")->ToString().find("powi") != std::string::npos);
  CHECK(Parse("(a*x)^(-2)")->ToString().find("powi") != std::string::npos);
  CHECK(Parse("(a*x)^0.5")->ToString().find("sqrt") != std::string::npos);
  CHECK(Parse("(a*x)^1.5")->ToString().find("powc") != std::string::npos);
  CHECK(Parse("(a*x)^b")->ToString().find("pow_explog") != std::string::npos);
  CHECK(Parse("a^x")->ToString().find("pow a x") != std::string::npos);
  CHECK(Parse("(a*x)^1")->NumInstructions() == 1);
}

TEST_CASE("ExpressionModel: derivative columns follow the dependency sets", "[engine]") {
  // x - m depends on m only, so it carries one derivative; 2*s^2 is one scalar.
  const std::string tape = Parse("h*exp(-(x-m)^2/(2*s^2))")->ToString();
  INFO(tape);
  CHECK(tape.find("sub x m  [vector] d/d{m}\n") != std::string::npos);
  CHECK(tape.find("[scalar] d/d{s}") != std::string::npos);
  CHECK(tape.find("d/d{h,m,s}") != std::string::npos);
}

std::vector<int> Linear(const std::string& text) { return Parse(text)->LinearParameters(); }

TEST_CASE("ExpressionModel: LinearParameters finds a maximal affine set", "[engine]") {
  using V = std::vector<int>;
  CHECK(Linear("a*exp(-x/t) + b") == V{0, 2});  // a, t, b
  CHECK(Linear("b1*(1-exp(-b2*x))") == V{0});
  CHECK(Linear("a*x + b*x^2 + c") == V{0, 1, 2});
  CHECK(Linear("(a + b)*x/2 - c") == V{0, 1, 2});
  CHECK(Linear("a*b*x") == V{0});         // a product of two: only the first
  CHECK(Linear("a*c + b*c") == V{0, 2});  // a, c, b: greedy keeps a, so not c
  CHECK(Linear("a/(b + x)") == V{0});     // division by b breaks b
  CHECK(Linear("x/b") == V{});
  CHECK(Linear("a^2*x") == V{});
  CHECK(Linear("exp(a)*x") == V{});
  CHECK(Linear("(a*x)^1 + 3") == V{0});  // ^1 is the identity, affine offset 3
  CHECK(Linear("-(a*x) + sin(x)*b") == V{0, 1});
  CHECK(Linear("h*exp(-(x-m)^2/(2*s^2)) + k") == V{0, 3});
  CHECK(Linear("(a*x)^0 + b") == V{1});  // a has no effect and is left out
  CHECK(Linear("bottom + (top-bottom)/(1+10^((c-x)*h))") == V{0, 1});
}

TEST_CASE("ExpressionModel: expressions over several columns", "[engine]") {
  const auto model = Parse("a*x1 + b*exp(-c*x2)", {"x1", "x2", "y"});
  REQUIRE(model->PredictorNames() == std::vector<std::string>{"x1", "x2"});
  const int n = 4;
  Eigen::MatrixXd x(n, 2);
  x << 1.0, 0.0, 2.0, 0.5, -1.0, 1.0, 3.0, 2.0;
  const double params[] = {1.5, -2.0, 0.8};
  Eigen::VectorXd values(n);
  Eigen::MatrixXd jacobian(n, 3);
  model->EvaluateWithJacobian(x, params, values.data(), jacobian.data());
  for (int i = 0; i < n; ++i) {
    const double e = std::exp(-params[2] * x(i, 1));
    CHECK(values[i] == Approx(params[0] * x(i, 0) + params[1] * e).epsilon(1e-15));
    CHECK(jacobian(i, 0) == x(i, 0));
    CHECK(jacobian(i, 1) == Approx(e).epsilon(1e-15));
    CHECK(jacobian(i, 2) == Approx(-params[1] * x(i, 1) * e).epsilon(1e-15).margin(1e-300));
  }
  CHECK(model->LinearParameters() == std::vector<int>{0, 1});
}

TEST_CASE("ExpressionModel: Clone gives identical results, also on other threads", "[engine]") {
  const auto model = Parse("h*exp(-(x-m)^2/(2*s^2)) + k*x");
  const int n = 500;
  Eigen::MatrixXd x(n, 1);
  for (int i = 0; i < n; ++i) x(i, 0) = -5.0 + 10.0 * i / (n - 1);
  const double params[] = {2.0, 0.3, 1.1, 0.05};
  Eigen::VectorXd reference(n);
  Eigen::MatrixXd reference_jacobian(n, 4);
  model->EvaluateWithJacobian(x, params, reference.data(), reference_jacobian.data());

  const int num_threads = 2;
  std::vector<std::unique_ptr<Model>> clones;
  std::vector<Eigen::VectorXd> values(num_threads, Eigen::VectorXd(n));
  std::vector<Eigen::MatrixXd> jacobians(num_threads, Eigen::MatrixXd(n, 4));
  for (int t = 0; t < num_threads; ++t) clones.push_back(model->Clone());
  std::vector<std::thread> threads;
  for (int t = 0; t < num_threads; ++t) {
    threads.emplace_back([&, t] {
      for (int repeat = 0; repeat < 200; ++repeat) {
        clones[t]->EvaluateWithJacobian(x, params, values[t].data(), jacobians[t].data());
      }
    });
  }
  for (std::thread& thread : threads) thread.join();
  for (int t = 0; t < num_threads; ++t) {
    CHECK(clones[t]->ParameterNames() == model->ParameterNames());
    CHECK((values[t].array() == reference.array()).all());
    CHECK((jacobians[t].array() == reference_jacobian.array()).all());
  }
}

TEST_CASE("ExpressionModel: scratch buffers follow a change in the number of points", "[engine]") {
  const auto model = Parse("a*sin(b*x) + c");
  const double params[] = {1.2, 0.7, -0.4};
  for (int n : {5, 17, 1, 5}) {
    Eigen::MatrixXd x(n, 1);
    for (int i = 0; i < n; ++i) x(i, 0) = 0.3 * i;
    Eigen::VectorXd values(n);
    Eigen::MatrixXd jacobian(n, 3);
    model->EvaluateWithJacobian(x, params, values.data(), jacobian.data());
    for (int i = 0; i < n; ++i) {
      CHECK(values[i] == params[0] * std::sin(params[1] * x(i, 0)) + params[2]);
      CHECK(jacobian(i, 2) == 1.0);
    }
  }
  // No points: nothing is written and nothing fails.
  Eigen::MatrixXd empty(0, 1);
  model->Evaluate(empty, params, nullptr);
}

TEST_CASE("EvaluateColumnExpression: transforms columns and names a bad row", "[engine]") {
  Eigen::MatrixXd columns(3, 2);
  columns << 1.0, 2.0, 2.0, 4.0, 3.0, -1.0;  // columns x, y
  Eigen::VectorXd out;
  std::string error;
  REQUIRE(EvaluateColumnExpression("x^2 + 1", {"x", "y"}, columns, &out, &error));
  CHECK(out[0] == 2.0);
  CHECK(out[1] == 5.0);
  CHECK(out[2] == 10.0);
  CHECK_FALSE(EvaluateColumnExpression("log(y)", {"x", "y"}, columns, &out, &error));
  CHECK(error == "row 2 (y = -1): 'log(y)' evaluates to nan; expected a finite value");
  CHECK_FALSE(EvaluateColumnExpression("log(y*k)", {"x", "y"}, columns, &out, &error));
  CHECK(error ==
        "position 7: 'k' is not a data column; a column expression takes no parameters (the "
        "columns are x, y)");
  CHECK_FALSE(EvaluateColumnExpression("log(", {"x", "y"}, columns, &out, &error));
  CHECK(error == "position 5: expected a number, a name or '(' but found end of input");
  CHECK_FALSE(EvaluateColumnExpression("x", {"x"}, columns, &out, &error));
  CHECK(error == "the columns matrix has 2 columns but 1 names");
  REQUIRE(EvaluateColumnExpression("2*pi", {"x", "y"}, columns, &out, &error));
  CHECK(out.size() == 3);
  CHECK(out[2] == 2 * M_PI);
}

}  // namespace
}  // namespace foothold
