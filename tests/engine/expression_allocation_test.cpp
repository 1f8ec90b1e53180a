// Evaluating an expression model allocates nothing once its scratch is sized for n.
// (Its own executable: replacing the global operator new affects the whole program.)
#include <catch2/catch.hpp>

#include "engine/model/expression_model.h"
#include "tests/engine/allocation_counter.h"

namespace foothold {
namespace {

TEST_CASE("ExpressionModel: evaluation with an unchanged n allocates nothing", "[engine]") {
  const char* texts[] = {
      "h*exp(-(x-m)^2/(2*s^2)) + b",
      "a*exp(-b*x) - c*exp(-d*x) + e",
      "(b1 + b2*x + b3*x^2)/(1 + b4*x + b5*x^2)",
      "b1*(b2 + x)^(-1/b3) + abs(sin(b4*x))^1.5 + erf(b5*x) + c",
      "a*b",  // a scalar result, broadcast
  };
  for (const char* text : texts) {
    INFO(text);
    std::string error;
    auto model = ParseExpressionModel(text, {"x"}, {}, ExpressionOptions(), &error);
    REQUIRE(model);
    const int n = 64;
    Eigen::MatrixXd x(n, static_cast<Eigen::Index>(model->PredictorNames().size()));
    for (Eigen::Index i = 0; i < x.size(); ++i) x.data()[i] = 0.5 + 0.01 * i;
    const std::vector<double> params(model->NumParameters(), 0.7);
    Eigen::VectorXd values(n);
    Eigen::MatrixXd jacobian(n, model->NumParameters());
    // The first calls size the scratch.
    model->Evaluate(x, params.data(), values.data());
    model->EvaluateWithJacobian(x, params.data(), values.data(), jacobian.data());
    const long before = testing::NumAllocations();
    for (int repeat = 0; repeat < 10; ++repeat) {
      model->Evaluate(x, params.data(), values.data());
      model->EvaluateWithJacobian(x, params.data(), values.data(), jacobian.data());
    }
    CHECK(testing::NumAllocations() == before);
  }
}

}  // namespace
}  // namespace foothold
