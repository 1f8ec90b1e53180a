#include "engine/model/internal/expression_parser.h"

#include <algorithm>

#include "engine/model/internal/expression_lexer.h"

namespace foothold {
namespace internal {
namespace {

constexpr Function kFunctions[] = {Function::kExp,  Function::kLog,  Function::kLog10,
                                   Function::kSqrt, Function::kSin,  Function::kCos,
                                   Function::kTan,  Function::kAtan, Function::kTanh,
                                   Function::kAbs,  Function::kErf};

// pi to the precision of a double (the correctly rounded value of M_PI).
constexpr double kPi = 3.141592653589793238462643383279502884;

// "'a', 'b'" or "no parameters".
std::string QuotedList(const std::vector<std::string>& names) {
  if (names.empty()) return "no parameters";
  std::string list;
  for (const std::string& name : names) list += (list.empty() ? "'" : ", '") + name + "'";
  return list;
}

constexpr char kOperandExpected[] = "expected a number, a name or '('";

class Parser {
 public:
  Parser(const std::vector<Token>& tokens, const std::vector<std::string>& column_names,
         const ExpressionOptions& options, SyntaxTree* tree)
      : tokens_(tokens), column_names_(column_names), options_(options), tree_(tree) {}

  bool Parse(std::string* error) {
    if (Peek().kind == TokenKind::kEnd) return Fail(1, "empty expression", error);
    if (!ParseExpression(error)) return false;
    const Token& next = Peek();
    if (next.kind == TokenKind::kRightParen) {
      return Fail(next.position, "unexpected ')' without a matching '('", error);
    }
    if (next.kind != TokenKind::kEnd) {
      return Fail(
          next.position,
          "expected an operator (+ - * / ^) or end of input but found " + DescribeToken(next),
          error);
    }
    return true;
  }

 private:
  const Token& Peek() const { return tokens_[next_]; }
  const Token& Take() { return tokens_[next_++]; }

  bool Fail(int position, const std::string& what, std::string* error) const {
    if (error) *error = "position " + std::to_string(position) + ": " + what;
    return false;
  }

  int LastEnd() const { return tree_->nodes.back().end; }

  int Add(Node node) {
    tree_->nodes.push_back(node);
    return static_cast<int>(tree_->nodes.size()) - 1;
  }

  int AddOperator(NodeKind kind, int left, int right, int begin) {
    Node node;
    node.kind = kind;
    node.left = left;
    node.right = right;
    node.begin = begin;
    node.end = tree_->nodes[right < 0 ? left : right].end;
    return Add(node);
  }

  // Each parenthesis, function call, sign and exponent opens one level of nesting.
  bool Enter(int position, std::string* error) {
    if (++depth_ > options_.max_depth) {
      return Fail(position,
                  "nesting deeper than max_depth = " + std::to_string(options_.max_depth) +
                      " (each parenthesis, function call, sign and exponent adds a level)",
                  error);
    }
    return true;
  }
  void Leave() { --depth_; }

  bool ParseExpression(std::string* error) {
    if (!ParseTerm(error)) return false;
    while (Peek().kind == TokenKind::kPlus || Peek().kind == TokenKind::kMinus) {
      const NodeKind kind = Take().kind == TokenKind::kPlus ? NodeKind::kAdd : NodeKind::kSubtract;
      const int left = tree_->Root();
      if (!ParseTerm(error)) return false;
      AddOperator(kind, left, tree_->Root(), tree_->nodes[left].begin);
    }
    return true;
  }

  bool ParseTerm(std::string* error) {
    if (!ParseSigned(error)) return false;
    while (Peek().kind == TokenKind::kStar || Peek().kind == TokenKind::kSlash) {
      const NodeKind kind =
          Take().kind == TokenKind::kStar ? NodeKind::kMultiply : NodeKind::kDivide;
      const int left = tree_->Root();
      if (!ParseSigned(error)) return false;
      AddOperator(kind, left, tree_->Root(), tree_->nodes[left].begin);
    }
    return true;
  }

  bool ParseSigned(std::string* error) {
    const Token& sign = Peek();
    if (sign.kind != TokenKind::kMinus && sign.kind != TokenKind::kPlus) return ParsePower(error);
    Take();
    if (!Enter(sign.position, error) || !ParseSigned(error)) return false;
    Leave();
    // Unary plus is the identity and leaves no node; its span still starts at the sign.
    if (sign.kind == TokenKind::kMinus) {
      AddOperator(NodeKind::kNegate, tree_->Root(), -1, sign.position);
    } else {
      tree_->nodes.back().begin = sign.position;
    }
    return true;
  }

  bool ParsePower(std::string* error) {
    if (!ParsePrimary(error)) return false;
    if (Peek().kind != TokenKind::kCaret) return true;
    const Token& caret = Take();
    const int base = tree_->Root();
    // The exponent is `signed`, which itself ends in `power`: right associativity.
    if (!Enter(caret.position, error) || !ParseSigned(error)) return false;
    Leave();
    AddOperator(NodeKind::kPower, base, tree_->Root(), tree_->nodes[base].begin);
    return true;
  }

  bool ParsePrimary(std::string* error) {
    const Token& token = Peek();
    switch (token.kind) {
      case TokenKind::kNumber: {
        Take();
        Node node;
        node.kind = NodeKind::kConstant;
        node.value = token.number;
        node.begin = token.position;
        node.end = token.position + static_cast<int>(token.text.size());
        Add(node);
        return true;
      }
      case TokenKind::kIdentifier:
        Take();
        if (Peek().kind == TokenKind::kLeftParen) return ParseCall(token, error);
        return ResolveName(token, error);
      case TokenKind::kLeftParen: {
        Take();
        if (!Enter(token.position, error) || !ParseGroupBody("'('", error)) return false;
        Leave();
        const Token& close = Take();
        tree_->nodes.back().begin = token.position;
        tree_->nodes.back().end = close.position + 1;
        return true;
      }
      case TokenKind::kEnd:
        return Fail(token.position, std::string(kOperandExpected) + " but found end of input",
                    error);
      default:
        return Fail(token.position, "unexpected " + DescribeToken(token) + ": " + kOperandExpected,
                    error);
    }
  }

  // The inside of "( ... )" up to and excluding the ')', which must follow.
  bool ParseGroupBody(const std::string& opener, std::string* error) {
    if (Peek().kind == TokenKind::kRightParen) {
      return Fail(Peek().position, "unexpected ')': expected an expression after " + opener, error);
    }
    if (!ParseExpression(error)) return false;
    const Token& next = Peek();
    if (next.kind != TokenKind::kRightParen) {
      return Fail(next.position, "expected ')' but found " + DescribeToken(next), error);
    }
    return true;
  }

  bool ParseCall(const Token& name, std::string* error) {
    Function function;
    if (!FindFunction(name.text, &function)) {
      return Fail(name.position,
                  "unknown function '" + name.text + "'; the functions are " + FunctionList(),
                  error);
    }
    Take();  // '('
    if (!Enter(name.position, error)) return false;
    if (!ParseGroupBody("'" + name.text + "('", error)) return false;
    Leave();
    const Token& close = Take();
    Node node;
    node.kind = NodeKind::kFunction;
    node.function = function;
    node.left = tree_->Root();
    node.begin = name.position;
    node.end = close.position + 1;
    Add(node);
    return true;
  }

  // A name not followed by '(': a data column, then pi, then a parameter.
  bool ResolveName(const Token& name, std::string* error) {
    Node node;
    node.begin = name.position;
    node.end = name.position + static_cast<int>(name.text.size());
    const auto column = std::find(column_names_.begin(), column_names_.end(), name.text);
    Function function;
    if (column != column_names_.end()) {
      node.kind = NodeKind::kColumn;
      node.index = static_cast<int>(column - column_names_.begin());
    } else if (name.text == "pi") {
      node.kind = NodeKind::kConstant;
      node.value = kPi;
    } else if (FindFunction(name.text, &function)) {
      return Fail(
          name.position,
          "expected '(' after the function '" + name.text + "' but found " + DescribeToken(Peek()),
          error);
    } else {
      node.kind = NodeKind::kParameter;
      auto& names = tree_->parameter_names;
      const auto found = std::find(names.begin(), names.end(), name.text);
      node.index = static_cast<int>(found - names.begin());
      if (found == names.end()) {
        if (static_cast<int>(names.size()) >= options_.max_parameters) {
          return Fail(name.position,
                      "'" + name.text + "' would be parameter number " +
                          std::to_string(names.size() + 1) +
                          " but max_parameters = " + std::to_string(options_.max_parameters),
                      error);
        }
        names.push_back(name.text);
        tree_->parameter_positions.push_back(name.position);
      }
    }
    Add(node);
    return true;
  }

  const std::vector<Token>& tokens_;
  const std::vector<std::string>& column_names_;
  const ExpressionOptions& options_;
  SyntaxTree* tree_;
  size_t next_ = 0;
  int depth_ = 0;
};

}  // namespace

const char* FunctionName(Function function) {
  switch (function) {
    case Function::kExp:
      return "exp";
    case Function::kLog:
      return "log";
    case Function::kLog10:
      return "log10";
    case Function::kSqrt:
      return "sqrt";
    case Function::kSin:
      return "sin";
    case Function::kCos:
      return "cos";
    case Function::kTan:
      return "tan";
    case Function::kAtan:
      return "atan";
    case Function::kTanh:
      return "tanh";
    case Function::kAbs:
      return "abs";
    case Function::kErf:
      return "erf";
  }
  return "?";
}

bool FindFunction(const std::string& name, Function* function) {
  for (Function candidate : kFunctions) {
    if (name == FunctionName(candidate)) {
      *function = candidate;
      return true;
    }
  }
  return false;
}

std::string FunctionList() {
  std::string list;
  for (Function function : kFunctions) {
    if (!list.empty()) list += ", ";
    list += FunctionName(function);
  }
  return list;
}

bool ParseSyntaxTree(const std::string& text, const std::vector<std::string>& column_names,
                     const ExpressionOptions& options, SyntaxTree* tree, std::string* error) {
  *tree = SyntaxTree();
  std::vector<Token> tokens;
  if (!Tokenize(text, &tokens, error)) return false;
  Parser parser(tokens, column_names, options, tree);
  return parser.Parse(error);
}

bool ApplyParameterOrder(const std::vector<std::string>& order,
                         const std::vector<std::string>& column_names, SyntaxTree* tree,
                         std::string* error) {
  const auto fail = [error](const std::string& what) {
    if (error) *error = what;
    return false;
  };
  const std::vector<std::string>& used = tree->parameter_names;
  std::vector<int> new_index(used.size(), -1);
  for (size_t k = 0; k < order.size(); ++k) {
    const std::string at = "parameter_order[" + std::to_string(k) + "] = '" + order[k] + "'";
    for (size_t earlier = 0; earlier < k; ++earlier) {
      if (order[earlier] == order[k]) {
        return fail(at + " repeats parameter_order[" + std::to_string(earlier) + "]");
      }
    }
    const auto found = std::find(used.begin(), used.end(), order[k]);
    if (found != used.end()) {
      new_index[found - used.begin()] = static_cast<int>(k);
      continue;
    }
    if (std::find(column_names.begin(), column_names.end(), order[k]) != column_names.end()) {
      return fail(at + " is a data column, not a parameter");
    }
    return fail(at + " is not a parameter of the expression; it uses " + QuotedList(used));
  }
  for (size_t j = 0; j < used.size(); ++j) {
    if (new_index[j] < 0) {
      return fail("parameter '" + used[j] + "' (position " +
                  std::to_string(tree->parameter_positions[j]) +
                  ") is used by the expression but missing from parameter_order");
    }
  }
  for (Node& node : tree->nodes) {
    if (node.kind == NodeKind::kParameter) node.index = new_index[node.index];
  }
  std::vector<std::string> names(order.size());
  std::vector<int> positions(order.size());
  for (size_t j = 0; j < used.size(); ++j) {
    names[new_index[j]] = used[j];
    positions[new_index[j]] = tree->parameter_positions[j];
  }
  tree->parameter_names = std::move(names);
  tree->parameter_positions = std::move(positions);
  return true;
}

}  // namespace internal
}  // namespace foothold
