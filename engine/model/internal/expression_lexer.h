#pragma once
// Tokens of the expression grammar (docs/expressions.md). Positions are 1-based
// character offsets into the text, the unit every error message uses.

#include <string>
#include <vector>

namespace foothold {
namespace internal {

enum class TokenKind {
  kNumber,
  kIdentifier,
  kPlus,
  kMinus,
  kStar,
  kSlash,
  kCaret,
  kLeftParen,
  kRightParen,
  kEnd,
};

struct Token {
  TokenKind kind = TokenKind::kEnd;
  // 1-based position of the first character; for kEnd, text length + 1.
  int position = 1;
  // The characters of the token as written ("2e-3", "sigma", "*").
  std::string text;
  // The value of a kNumber token.
  double number = 0.0;
};

// How an error message names a token: "'*'", "'sigma'", "end of input".
std::string DescribeToken(const Token& token);

// Splits `text` into tokens ending with one kEnd token. Spaces, tabs and line breaks
// separate tokens. False with "position N: ..." on a character outside the grammar, a
// malformed number or a number outside the range of a double.
bool Tokenize(const std::string& text, std::vector<Token>* tokens, std::string* error);

}  // namespace internal
}  // namespace foothold
