#include "engine/model/expression_model.h"

#include <cmath>
#include <sstream>

#include "engine/model/internal/expression_compile.h"
#include "engine/model/internal/expression_parser.h"
#include "engine/model/internal/expression_tape.h"
#include "engine/model/internal/expression_workspace.h"

namespace foothold {
namespace {

bool Fail(const std::string& what, std::string* error) {
  if (error) *error = what;
  return false;
}

bool CheckAtLeastOne(const char* field, int value, std::string* error) {
  if (value >= 1) return true;
  return Fail(std::string(field) + " = " + std::to_string(value) + ": must be >= 1", error);
}

std::string JoinNames(const std::vector<std::string>& names) {
  std::string joined;
  for (const std::string& name : names) joined += (joined.empty() ? "" : ", ") + name;
  return joined.empty() ? "(none)" : joined;
}

}  // namespace

bool ExpressionOptions::Validate(std::string* error) const {
  return CheckAtLeastOne("max_length", max_length, error) &&
         CheckAtLeastOne("max_depth", max_depth, error) &&
         CheckAtLeastOne("max_parameters", max_parameters, error);
}

ExpressionModel::ExpressionModel(std::string text, std::shared_ptr<const internal::Tape> tape)
    : text_(std::move(text)),
      tape_(std::move(tape)),
      linear_parameters_(internal::FindLinearParameters(*tape_)),
      workspace_(std::make_unique<internal::TapeWorkspace>(*tape_)) {}

ExpressionModel::~ExpressionModel() = default;

int ExpressionModel::NumParameters() const { return tape_->NumParameters(); }

const std::vector<std::string>& ExpressionModel::ParameterNames() const {
  return tape_->parameter_names;
}

const std::vector<std::string>& ExpressionModel::PredictorNames() const {
  return tape_->predictor_names;
}

void ExpressionModel::Evaluate(const Eigen::MatrixXd& x, const double* params,
                               double* values) const {
  workspace_->Evaluate(*tape_, x, params, values);
}

void ExpressionModel::EvaluateWithJacobian(const Eigen::MatrixXd& x, const double* params,
                                           double* values, double* jacobian) const {
  workspace_->EvaluateWithJacobian(*tape_, x, params, values, jacobian);
}

std::vector<int> ExpressionModel::LinearParameters() const { return linear_parameters_; }

std::unique_ptr<Model> ExpressionModel::Clone() const {
  return std::make_unique<ExpressionModel>(text_, tape_);
}

std::string ExpressionModel::ToString() const { return tape_->ToString(); }

int ExpressionModel::NumInstructions() const {
  return static_cast<int>(tape_->instructions.size());
}

namespace internal {

std::unique_ptr<ExpressionModel> CompileExpressionModel(
    const std::string& text, const std::vector<std::string>& column_names,
    const std::vector<std::string>& parameter_order, const ExpressionOptions& options,
    bool fold_constants, std::string* error) {
  if (!options.Validate(error)) return nullptr;
  if (static_cast<long>(text.size()) > options.max_length) {
    Fail("the expression is " + std::to_string(text.size()) +
             " characters long but max_length = " + std::to_string(options.max_length),
         error);
    return nullptr;
  }
  if (static_cast<long>(parameter_order.size()) > options.max_parameters) {
    Fail("parameter_order lists " + std::to_string(parameter_order.size()) +
             " names but max_parameters = " + std::to_string(options.max_parameters),
         error);
    return nullptr;
  }
  SyntaxTree tree;
  if (!ParseSyntaxTree(text, column_names, options, &tree, error)) return nullptr;
  if (!parameter_order.empty() &&
      !ApplyParameterOrder(parameter_order, column_names, &tree, error)) {
    return nullptr;
  }
  auto tape = std::make_shared<Tape>();
  if (!BuildTape(tree, text, column_names, fold_constants, tape.get(), error)) return nullptr;
  return std::make_unique<ExpressionModel>(text, std::move(tape));
}

}  // namespace internal

std::unique_ptr<ExpressionModel> ParseExpressionModel(
    const std::string& text, const std::vector<std::string>& column_names,
    const std::vector<std::string>& parameter_order, const ExpressionOptions& options,
    std::string* error) {
  return internal::CompileExpressionModel(text, column_names, parameter_order, options,
                                          /*fold_constants=*/true, error);
}

bool EvaluateColumnExpression(const std::string& text, const std::vector<std::string>& column_names,
                              const Eigen::MatrixXd& columns, Eigen::VectorXd* out,
                              std::string* error) {
  if (static_cast<size_t>(columns.cols()) != column_names.size()) {
    return Fail("the columns matrix has " + std::to_string(columns.cols()) + " columns but " +
                    std::to_string(column_names.size()) + " names",
                error);
  }
  const ExpressionOptions options;
  internal::SyntaxTree tree;
  if (static_cast<long>(text.size()) > options.max_length) {
    return Fail("the expression is " + std::to_string(text.size()) +
                    " characters long but max_length = " + std::to_string(options.max_length),
                error);
  }
  if (!internal::ParseSyntaxTree(text, column_names, options, &tree, error)) return false;
  if (!tree.parameter_names.empty()) {
    return Fail("position " + std::to_string(tree.parameter_positions[0]) + ": '" +
                    tree.parameter_names[0] +
                    "' is not a data column; a column expression takes no parameters "
                    "(the columns are " +
                    JoinNames(column_names) + ")",
                error);
  }
  auto tape = std::make_shared<internal::Tape>();
  if (!internal::BuildTape(tree, text, column_names, true, tape.get(), error)) return false;
  const ExpressionModel model(text, tape);
  // The model reads only the columns the expression names, in column order.
  const std::vector<std::string>& used = model.PredictorNames();
  std::vector<int> source(used.size());
  Eigen::MatrixXd x(columns.rows(), static_cast<Eigen::Index>(used.size()));
  for (size_t j = 0, c = 0; j < used.size(); ++c) {
    if (column_names[c] != used[j]) continue;
    source[j] = static_cast<int>(c);
    x.col(static_cast<Eigen::Index>(j)) = columns.col(static_cast<Eigen::Index>(c));
    ++j;
  }
  out->resize(columns.rows());
  model.Evaluate(x, nullptr, out->data());
  for (Eigen::Index i = 0; i < out->size(); ++i) {
    if (std::isfinite((*out)[i])) continue;
    std::ostringstream message;
    message.precision(17);
    message << "row " << i;
    for (size_t j = 0; j < used.size(); ++j) {
      message << (j ? ", " : " (") << used[j] << " = " << columns(i, source[j]);
    }
    message << (used.empty() ? "" : ")") << ": '" << text << "' evaluates to ";
    if (std::isnan((*out)[i])) {
      message << "nan";  // whatever its sign bit, for stable messages
    } else {
      message << (*out)[i];
    }
    message << "; expected a finite value";
    return Fail(message.str(), error);
  }
  return true;
}

}  // namespace foothold
