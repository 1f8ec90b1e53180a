#pragma once
// Recursive-descent parser from tokens to a syntax tree, with identifiers resolved to
// data columns, parameters, functions or the constant pi.
//
//   expression := term (('+' | '-') term)*
//   term       := signed (('*' | '/') signed)*
//   signed     := ('-' | '+') signed | power
//   power      := primary ('^' signed)?          right-associative through `signed`
//   primary    := number | name | function '(' expression ')' | '(' expression ')'

#include <string>
#include <vector>

#include "engine/model/expression_model.h"

namespace foothold {
namespace internal {

enum class Function { kExp, kLog, kLog10, kSqrt, kSin, kCos, kTan, kAtan, kTanh, kAbs, kErf };

// The grammar's function name, e.g. "log10".
const char* FunctionName(Function function);
// Looks a name up among the functions; false when it is not one.
bool FindFunction(const std::string& name, Function* function);
// "exp, log, log10, ..." for error messages.
std::string FunctionList();

enum class NodeKind {
  kConstant,
  kParameter,
  kColumn,
  kNegate,
  kAdd,
  kSubtract,
  kMultiply,
  kDivide,
  kPower,
  kFunction
};

struct Node {
  NodeKind kind = NodeKind::kConstant;
  // Operands as node indices; -1 when absent. Operands always precede their node.
  int left = -1;
  int right = -1;
  // kConstant: the value.
  double value = 0.0;
  // kParameter: parameter index; kColumn: index into the column names.
  int index = -1;
  Function function = Function::kExp;
  // The characters the node spans: 1-based first position and one past the last.
  int begin = 1;
  int end = 1;
};

struct SyntaxTree {
  // In post-order: every node's operands have smaller indices, the root is last.
  std::vector<Node> nodes;
  // In order of first appearance (before ApplyParameterOrder).
  std::vector<std::string> parameter_names;
  // 1-based position of each parameter's first appearance.
  std::vector<int> parameter_positions;

  int Root() const { return static_cast<int>(nodes.size()) - 1; }
};

// Parses `text` (whose length the caller has checked against options.max_length).
bool ParseSyntaxTree(const std::string& text, const std::vector<std::string>& column_names,
                     const ExpressionOptions& options, SyntaxTree* tree, std::string* error);

// Renumbers the parameters to follow `order`, which must list each used parameter once
// and nothing else.
bool ApplyParameterOrder(const std::vector<std::string>& order,
                         const std::vector<std::string>& column_names, SyntaxTree* tree,
                         std::string* error);

}  // namespace internal
}  // namespace foothold
