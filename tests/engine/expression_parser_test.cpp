// Grammar, precedence, error messages, parameter order and limits of expression models.
#include <catch2/catch.hpp>
#include <cmath>
#include <string>
#include <vector>

#include "engine/model/expression_model.h"

namespace foothold {
namespace {

// Values of a parameter-free expression are exact in these cases: small integers and
// dyadic fractions are represented exactly and the operations round exactly.
double Value(const std::string& text, double x = 0.0) {
  std::string error;
  auto model = ParseExpressionModel(text, {"x"}, {}, ExpressionOptions(), &error);
  INFO(text << ": " << error);
  REQUIRE(model);
  Eigen::MatrixXd columns(1, static_cast<Eigen::Index>(model->PredictorNames().size()));
  if (columns.cols() == 1) columns(0, 0) = x;
  const std::vector<double> params(model->NumParameters(), 0.0);
  double value = 0.0;
  model->Evaluate(columns, params.data(), &value);
  return value;
}

std::string ErrorOf(const std::string& text, const std::vector<std::string>& columns = {"x"},
                    const std::vector<std::string>& order = {},
                    const ExpressionOptions& options = ExpressionOptions()) {
  std::string error;
  auto model = ParseExpressionModel(text, columns, order, options, &error);
  INFO(text);
  CHECK_FALSE(model);
  return error;
}

TEST_CASE("ExpressionModel: numbers in every written form", "[engine]") {
  CHECK(Value("1") == 1.0);
  CHECK(Value("1.5") == 1.5);
  CHECK(Value(".5") == 0.5);
  CHECK(Value("5.") == 5.0);
  CHECK(Value("2e-3") == 2e-3);
  CHECK(Value("1E+4") == 1e4);
  CHECK(Value("1e4") == 1e4);
  CHECK(Value("2.5e1") == 25.0);
  // Underflow to zero is a legitimate literal; overflow is not.
  CHECK(Value("1e-400") == 0.0);
  CHECK(ErrorOf("1e400") == "position 1: the number '1e400' is outside the range of a double");
}

TEST_CASE("ExpressionModel: precedence and associativity", "[engine]") {
  CHECK(Value("1 + 2 * 3") == 7.0);
  CHECK(Value("(1 + 2) * 3") == 9.0);
  CHECK(Value("10 - 4 - 3") == 3.0);   // left-associative
  CHECK(Value("48 / 4 / 2") == 6.0);   // left-associative
  CHECK(Value("2 ^ 3 ^ 2") == 512.0);  // right-associative
  CHECK(Value("(2 ^ 3) ^ 2") == 64.0);
  CHECK(Value("-2 ^ 2") == -4.0);  // '^' binds tighter than unary minus
  CHECK(Value("(-2) ^ 2") == 4.0);
  CHECK(Value("-x^2", 3.0) == -9.0);
  CHECK(Value("2 ^ -1") == 0.5);      // a signed exponent
  CHECK(Value("2 ^ -1 ^ 2") == 0.5);  // 2^(-(1^2))
  CHECK(Value("64 / 2 ^ 3") == 8.0);  // a/b^c == a/(b^c)
  CHECK(Value("2 * 3 ^ 2") == 18.0);
  CHECK(Value("- - 3") == 3.0);
  CHECK(Value("+3") == 3.0);
  CHECK(Value("-+-3") == 3.0);
  CHECK(Value("2 - -3") == 5.0);
  CHECK(Value("2 * -3") == -6.0);
  CHECK(Value("-3 * 2 + 1") == -5.0);
  CHECK(Value("1 - 2 * 3 ^ 2 / 6") == -2.0);
  CHECK(Value("abs(-2) ^ 3") == 8.0);
  CHECK(Value("x ^ 0.5", 16.0) == 4.0);
  CHECK(Value("\t1 +\n 2 ") == 3.0);
}

TEST_CASE("ExpressionModel: negative bases with integer constant exponents", "[engine]") {
  CHECK(Value("x ^ 3", -2.0) == -8.0);
  CHECK(Value("x ^ (-2)", -2.0) == 0.25);
  CHECK(Value("x ^ -3", -2.0) == -0.125);
  CHECK(Value("x ^ 100", -1.0) == 1.0);  // beyond repeated multiplication: std::pow
  CHECK(Value("(1 + x/2) ^ (-2)", -6.0) == 0.25);
  CHECK(std::isnan(Value("x ^ 0.5", -4.0)));  // no real square root
}

TEST_CASE("ExpressionModel: functions and pi", "[engine]") {
  // Reference values: the C library's own functions, which the tape must call. The
  // volatile keeps the compiler from folding them with its own (differently rounded) maths.
  volatile double runtime_x = 0.7;
  const double x = runtime_x;
  CHECK(Value("exp(x)", x) == std::exp(x));
  CHECK(Value("log(x)", x) == std::log(x));
  CHECK(Value("log10(x)", x) == std::log10(x));
  CHECK(Value("sqrt(x)", x) == std::sqrt(x));
  CHECK(Value("sin(x)", x) == std::sin(x));
  CHECK(Value("cos(x)", x) == std::cos(x));
  CHECK(Value("tan(x)", x) == std::tan(x));
  CHECK(Value("atan(x)", x) == std::atan(x));
  CHECK(Value("tanh(x)", x) == std::tanh(x));
  CHECK(Value("abs(-x)", x) == x);
  CHECK(Value("erf(x)", x) == std::erf(x));
  CHECK(Value("pi") == M_PI);
  CHECK(Value("cos(pi)") == -1.0);
  CHECK(std::isnan(Value("log(x)", -1.0)));  // non-finite results are allowed at run time
  CHECK(std::isinf(Value("x/0", 1.0)));
  CHECK(std::isinf(Value("x/(1 - 1)", 1.0)));
}

TEST_CASE("ExpressionModel: syntax errors name the position and the expectation", "[engine]") {
  CHECK(ErrorOf("") == "position 1: empty expression");
  CHECK(ErrorOf("   ") == "position 1: empty expression");
  CHECK(ErrorOf("exp(-x/t") == "position 9: expected ')' but found end of input");
  CHECK(ErrorOf("a + * b") == "position 5: unexpected '*': expected a number, a name or '('");
  CHECK(ErrorOf("a**2") == "position 3: unexpected '*': expected a number, a name or '('");
  CHECK(ErrorOf("a +") == "position 4: expected a number, a name or '(' but found end of input");
  CHECK(ErrorOf("(a + b") == "position 7: expected ')' but found end of input");
  CHECK(ErrorOf("a + b)") == "position 6: unexpected ')' without a matching '('");
  CHECK(ErrorOf("()") == "position 2: unexpected ')': expected an expression after '('");
  CHECK(ErrorOf("exp()") == "position 5: unexpected ')': expected an expression after 'exp('");
  CHECK(ErrorOf("a b") ==
        "position 3: expected an operator (+ - * / ^) or end of input but found 'b'");
  CHECK(ErrorOf("(a)(b)") ==
        "position 4: expected an operator (+ - * / ^) or end of input but found '('");
  CHECK(ErrorOf("exp(a, b)") ==
        "position 6: unexpected character ',': expected a number, a name, an operator "
        "(+ - * / ^) or a parenthesis");
  CHECK(ErrorOf("a $ b") ==
        "position 3: unexpected character '$': expected a number, a name, an operator "
        "(+ - * / ^) or a parenthesis");
  CHECK(ErrorOf("2x") ==
        "position 2: expected an operator after the number '2' but found character 'x' (write "
        "'*' to multiply)");
  CHECK(ErrorOf("1e+") == "position 4: expected a digit in the exponent of the number '1e+'");
  CHECK(ErrorOf("a + .") == "position 5: expected a digit before or after '.'");
  CHECK(ErrorOf("\xCE\xBC * x") ==
        "position 1: unexpected byte 0xCE: expected a number, a name, an operator (+ - * / ^) "
        "or a parenthesis");
  CHECK(ErrorOf("exp + 1") == "position 1: expected '(' after the function 'exp' but found '+'");
  CHECK(ErrorOf("a ^") == "position 4: expected a number, a name or '(' but found end of input");
}

TEST_CASE("ExpressionModel: an unknown function is named with its position", "[engine]") {
  CHECK(ErrorOf("a * foo(x)") ==
        "position 5: unknown function 'foo'; the functions are exp, log, log10, sqrt, sin, cos, "
        "tan, atan, tanh, abs, erf");
  // A column or parameter name directly before '(' is a call, not a product.
  CHECK(ErrorOf("x(1)").rfind("position 1: unknown function 'x'", 0) == 0);
  CHECK(ErrorOf("Exp(x)").rfind("position 1: unknown function 'Exp'", 0) == 0);
}

TEST_CASE("ExpressionModel: folded constants must be finite", "[engine]") {
  CHECK(ErrorOf("a * log(0)") ==
        "position 5: the constant 'log(0)' evaluates to -inf; expected a finite value");
  CHECK(ErrorOf("a + 1/(2 - 2)") ==
        "position 5: the constant '1/(2 - 2)' evaluates to inf; expected a finite value");
  CHECK(ErrorOf("a + sqrt(-1)").rfind("position 5: the constant 'sqrt(-1)' evaluates to ", 0) == 0);
}

TEST_CASE("ExpressionModel: identifiers are columns, pi, or parameters in order", "[engine]") {
  std::string error;
  auto model = ParseExpressionModel("b*x2 + a*exp(-x1/t) + b + pi", {"x1", "x2", "y"}, {},
                                    ExpressionOptions(), &error);
  REQUIRE(model);
  CHECK(model->ParameterNames() == std::vector<std::string>{"b", "a", "t"});
  CHECK(model->NumParameters() == 3);
  // Predictors follow the given column order, not the order of appearance; unused
  // columns are not read.
  CHECK(model->PredictorNames() == std::vector<std::string>{"x1", "x2"});
  CHECK(model->Text() == "b*x2 + a*exp(-x1/t) + b + pi");

  auto ordered = ParseExpressionModel("b*x + a", {"x"}, {"a", "b"}, ExpressionOptions(), &error);
  REQUIRE(ordered);
  CHECK(ordered->ParameterNames() == std::vector<std::string>{"a", "b"});
  Eigen::MatrixXd x(1, 1);
  x(0, 0) = 3.0;
  const double params[] = {1.0, 2.0};  // a = 1, b = 2
  double value = 0.0;
  ordered->Evaluate(x, params, &value);
  CHECK(value == 7.0);

  // A model without parameters and one without columns are both valid.
  auto constant = ParseExpressionModel("2*x", {"x"}, {}, ExpressionOptions(), &error);
  REQUIRE(constant);
  CHECK(constant->NumParameters() == 0);
  auto flat = ParseExpressionModel("c", {"x"}, {}, ExpressionOptions(), &error);
  REQUIRE(flat);
  CHECK(flat->PredictorNames().empty());
}

TEST_CASE("ExpressionModel: parameter_order must list exactly the used parameters", "[engine]") {
  CHECK(ErrorOf("a*x + b", {"x"}, {"a"}) ==
        "parameter 'b' (position 7) is used by the expression but missing from parameter_order");
  CHECK(ErrorOf("a*x + b", {"x"}, {"a", "b", "c"}) ==
        "parameter_order[2] = 'c' is not a parameter of the expression; it uses 'a', 'b'");
  CHECK(ErrorOf("a*x + b", {"x"}, {"a", "x", "b"}) ==
        "parameter_order[1] = 'x' is a data column, not a parameter");
  CHECK(ErrorOf("a*x + b", {"x"}, {"b", "a", "b"}) ==
        "parameter_order[2] = 'b' repeats parameter_order[0]");
}

TEST_CASE("ExpressionModel: limits from ExpressionOptions", "[engine]") {
  ExpressionOptions options;
  options.max_length = 10;
  CHECK(ErrorOf("a + b + c + d", {"x"}, {}, options) ==
        "the expression is 13 characters long but max_length = 10");
  CHECK(ParseExpressionModel("a + b + c", {"x"}, {}, options, nullptr));

  options = ExpressionOptions();
  options.max_depth = 3;
  CHECK(ParseExpressionModel("((exp(x)))", {"x"}, {}, options, nullptr));
  CHECK(ErrorOf("(((exp(x))))", {"x"}, {}, options) ==
        "position 4: nesting deeper than max_depth = 3 (each parenthesis, function call, sign "
        "and exponent adds a level)");
  CHECK(ErrorOf("- - - - x", {"x"}, {}, options).rfind("position 7: nesting deeper", 0) == 0);
  CHECK(ErrorOf("2^2^2^2^2", {"x"}, {}, options).rfind("position 8: nesting deeper", 0) == 0);

  options = ExpressionOptions();
  options.max_parameters = 2;
  CHECK(ErrorOf("a*x + b*x + c", {"x"}, {}, options) ==
        "position 13: 'c' would be parameter number 3 but max_parameters = 2");
  CHECK(ErrorOf("a*x + b", {"x"}, {"a", "b", "c"}, options) ==
        "parameter_order lists 3 names but max_parameters = 2");

  options = ExpressionOptions();
  options.max_depth = 0;
  CHECK(ErrorOf("x", {"x"}, {}, options) == "max_depth = 0: must be >= 1");
  std::string error;
  CHECK(ExpressionOptions().Validate(&error));

  // The default depth stops runaway nesting well before the stack is at risk.
  const std::string deep = std::string(200, '(') + "x" + std::string(200, ')');
  CHECK(ErrorOf(deep).rfind("position 65: nesting deeper than max_depth = 64", 0) == 0);
}

}  // namespace
}  // namespace foothold
