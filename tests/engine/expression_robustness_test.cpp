// Random texts never crash the parser or the evaluator: each is either a model whose
// Jacobian has the right shape or an error that names a position inside the text.
#include <catch2/catch.hpp>
#include <random>
#include <string>
#include <vector>

#include "engine/model/expression_model.h"

namespace foothold {
namespace {

constexpr int kNumRandomTexts = 20000;

// Fragments that make both valid and broken expressions likely.
const std::vector<std::string> kFragments = {
    "a",    "b",    "x",    "x2",   "pi", "1", "2",     ".5",   "1e3",  "2e-1",
    "+",    "-",    "*",    "/",    "^",  "(", ")",     "exp(", "log(", "sqrt(",
    "abs(", "erf(", "tan(", "foo(", " ",  "0", "1e400", ",",    "$"};

std::string RandomText(std::mt19937* random) {
  std::uniform_int_distribution<int> length(0, 14);
  std::uniform_int_distribution<size_t> pick(0, kFragments.size() - 1);
  std::string text;
  for (int k = length(*random); k > 0; --k) text += kFragments[pick(*random)];
  return text;
}

// "position N: ..." with 1 <= N <= length + 1.
bool NamesPositionInside(const std::string& error, size_t length) {
  if (error.rfind("position ", 0) != 0) return false;
  const size_t colon = error.find(':');
  if (colon == std::string::npos) return false;
  const long position = std::stol(error.substr(9, colon - 9));
  return position >= 1 && position <= static_cast<long>(length) + 1;
}

TEST_CASE("ExpressionModel: random texts give a model or a positioned error", "[engine]") {
  std::mt19937 random(424242);
  ExpressionOptions options;
  options.max_depth = 6;
  int num_models = 0;
  for (int t = 0; t < kNumRandomTexts; ++t) {
    const std::string text = RandomText(&random);
    std::string error;
    auto model = ParseExpressionModel(text, {"x", "x2"}, {}, options, &error);
    INFO("'" << text << "' -> " << error);
    if (!model) {
      REQUIRE(NamesPositionInside(error, text.size()));
      continue;
    }
    ++num_models;
    const int n = 3;
    Eigen::MatrixXd x(n, static_cast<Eigen::Index>(model->PredictorNames().size()));
    x.setConstant(0.75);
    const std::vector<double> params(model->NumParameters(), 1.25);
    Eigen::VectorXd values(n), values_only(n);
    Eigen::MatrixXd jacobian(n, model->NumParameters());
    model->EvaluateWithJacobian(x, params.data(), values.data(), jacobian.data());
    model->Evaluate(x, params.data(), values_only.data());
    // Bit-identical values from both entry points, NaN included.
    for (int i = 0; i < n; ++i) {
      REQUIRE(
          (values[i] == values_only[i] || (std::isnan(values[i]) && std::isnan(values_only[i]))));
    }
  }
  // The fragments are chosen so that a fair share of texts parse.
  CHECK(num_models > kNumRandomTexts / 50);
}

}  // namespace
}  // namespace foothold
