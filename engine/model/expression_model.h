#pragma once
// Models written as plain maths: parsed once into a compact tape, evaluated over the
// whole data vector with forward-mode automatic differentiation.
//
// Grammar (DESIGN.md §2, docs/expressions.md): numbers, identifiers, + - * / ^, unary
// minus, parentheses, functions exp log log10 sqrt sin cos tan atan tanh abs erf, the
// constant pi. '^' is right-associative and binds tighter than unary minus: -x^2 == -(x^2).
// Identifiers naming a data column are variables; every other identifier is a parameter.

#include <memory>
#include <string>
#include <vector>

#include "engine/model/model.h"

namespace foothold {

struct ExpressionOptions {
  // Longest accepted expression text in characters. Default 4096. Must be >= 1.
  int max_length = 4096;
  // Deepest accepted nesting of sub-expressions. Default 64. Must be >= 1.
  int max_depth = 64;
  // Most distinct parameters. Default 64. Must be >= 1.
  int max_parameters = 64;

  bool Validate(std::string* error) const;
};

namespace internal {
struct Tape;
class TapeWorkspace;
}  // namespace internal

// A parsed expression. The tape is immutable and shared between clones; each instance
// owns its scratch buffers, so one instance serves one thread at a time.
class ExpressionModel final : public Model {
 public:
  // Built by ParseExpressionModel.
  ExpressionModel(std::string text, std::shared_ptr<const internal::Tape> tape);
  ~ExpressionModel() override;

  int NumParameters() const override;
  const std::vector<std::string>& ParameterNames() const override;
  // The data columns the expression reads, in the order of the parse's column names.
  const std::vector<std::string>& PredictorNames() const override;
  void Evaluate(const Eigen::MatrixXd& x, const double* params, double* values) const override;
  void EvaluateWithJacobian(const Eigen::MatrixXd& x, const double* params, double* values,
                            double* jacobian) const override;
  // A maximal set, greedy in parameter order, in which the expression is jointly affine:
  // f = f0 + sum_l c_l * p_l with f0 and c_l free of those parameters (f0 may be nonzero).
  std::vector<int> LinearParameters() const override;
  std::unique_ptr<Model> Clone() const override;

  // The expression as written.
  const std::string& Text() const { return text_; }
  // The tape, one instruction per line ("t3 = mul h t2  [vector] d/d{h,m,s}").
  std::string ToString() const;
  int NumInstructions() const;

 private:
  std::string text_;
  std::shared_ptr<const internal::Tape> tape_;
  std::vector<int> linear_parameters_;
  mutable std::unique_ptr<internal::TapeWorkspace> workspace_;
};

// Parses `text`. `column_names` are the data columns an identifier may name.
// `parameter_order`, when not empty, fixes the parameter order and must list exactly the
// parameters the expression uses; otherwise parameters are in order of first appearance.
// On a syntax error returns nullptr and sets `error` to a message naming the 1-based
// character position and what was expected, e.g. "position 9: expected ')' but found end of input".
std::unique_ptr<ExpressionModel> ParseExpressionModel(
    const std::string& text, const std::vector<std::string>& column_names,
    const std::vector<std::string>& parameter_order, const ExpressionOptions& options,
    std::string* error);

// Evaluates a parameter-free expression in the columns (e.g. a transformed response
// "log(y)"): `columns` is n x column_names.size(). False with a message on error or on a
// non-finite value (row named).
bool EvaluateColumnExpression(const std::string& text, const std::vector<std::string>& column_names,
                              const Eigen::MatrixXd& columns, Eigen::VectorXd* out,
                              std::string* error);

}  // namespace foothold
