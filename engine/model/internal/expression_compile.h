#pragma once
// The whole pipeline text -> tokens -> syntax tree -> tape -> model, with constant
// folding switchable so that tests can check it changes no result.

#include <memory>
#include <string>
#include <vector>

#include "engine/model/expression_model.h"

namespace foothold {
namespace internal {

std::unique_ptr<ExpressionModel> CompileExpressionModel(
    const std::string& text, const std::vector<std::string>& column_names,
    const std::vector<std::string>& parameter_order, const ExpressionOptions& options,
    bool fold_constants, std::string* error);

}  // namespace internal
}  // namespace foothold
