#include "engine/model/internal/expression_lexer.h"

#include <charconv>
#include <cmath>
#include <cstdio>
#include <sstream>

namespace foothold {
namespace internal {
namespace {

bool IsDigit(char c) { return c >= '0' && c <= '9'; }
bool IsIdentifierStart(char c) {
  return (c >= 'A' && c <= 'Z') || (c >= 'a' && c <= 'z') || c == '_';
}
bool IsIdentifierPart(char c) { return IsIdentifierStart(c) || IsDigit(c); }
bool IsSpace(char c) { return c == ' ' || c == '\t' || c == '\n' || c == '\r'; }

// Names a character for an error message; bytes outside printable ASCII (for example
// the first byte of a UTF-8 'μ') are shown in hex because they cannot be quoted.
std::string DescribeCharacter(char c) {
  const unsigned char byte = static_cast<unsigned char>(c);
  if (byte >= 0x20 && byte < 0x7f) return std::string("character '") + c + "'";
  char buffer[32];
  std::snprintf(buffer, sizeof(buffer), "byte 0x%02X", static_cast<unsigned>(byte));
  return buffer;
}

bool Fail(int position, const std::string& what, std::string* error) {
  if (error) *error = "position " + std::to_string(position) + ": " + what;
  return false;
}

// Reads a number starting at text[*index]: digits [. digits] [e [+-] digits], or
// . digits [e ...]. Leaves *index after the number.
bool ReadNumber(const std::string& text, size_t* index, Token* token, std::string* error) {
  const size_t start = *index;
  size_t i = start;
  size_t num_mantissa_digits = 0;
  while (i < text.size() && IsDigit(text[i])) ++i, ++num_mantissa_digits;
  if (i < text.size() && text[i] == '.') {
    ++i;
    while (i < text.size() && IsDigit(text[i])) ++i, ++num_mantissa_digits;
  }
  const int position = static_cast<int>(start) + 1;
  if (num_mantissa_digits == 0) {
    return Fail(position, "expected a digit before or after '.'", error);
  }
  if (i < text.size() && (text[i] == 'e' || text[i] == 'E')) {
    size_t j = i + 1;
    if (j < text.size() && (text[j] == '+' || text[j] == '-')) ++j;
    if (j >= text.size() || !IsDigit(text[j])) {
      return Fail(
          static_cast<int>(j) + 1,
          "expected a digit in the exponent of the number '" + text.substr(start, j - start) + "'",
          error);
    }
    while (j < text.size() && IsDigit(text[j])) ++j;
    i = j;
  }
  if (i < text.size() && IsIdentifierStart(text[i])) {
    return Fail(static_cast<int>(i) + 1,
                "expected an operator after the number '" + text.substr(start, i - start) +
                    "' but found " + DescribeCharacter(text[i]) + " (write '*' to multiply)",
                error);
  }
  token->kind = TokenKind::kNumber;
  token->position = position;
  token->text = text.substr(start, i - start);
  // from_chars is locale-independent, unlike strtod; it rejects a leading '.', so
  // such numbers are read with a '0' in front.
  const std::string digits = token->text[0] == '.' ? "0" + token->text : token->text;
  double value = 0.0;
  const auto result = std::from_chars(digits.data(), digits.data() + digits.size(), value);
  if (result.ec == std::errc::result_out_of_range || !std::isfinite(value)) {
    // from_chars reports underflow to zero as out of range too; a subnormal or zero
    // literal is a legitimate, if odd, constant.
    std::istringstream stream(digits);
    stream.imbue(std::locale::classic());
    long double wide = 0.0L;
    stream >> wide;
    if (std::fabs(wide) < 1.0L) {
      value = static_cast<double>(wide);
    } else {
      return Fail(position, "the number '" + token->text + "' is outside the range of a double",
                  error);
    }
  } else if (result.ec != std::errc() || result.ptr != digits.data() + digits.size()) {
    return Fail(position, "cannot read the number '" + token->text + "'", error);
  }
  token->number = value;
  *index = i;
  return true;
}

}  // namespace

std::string DescribeToken(const Token& token) {
  if (token.kind == TokenKind::kEnd) return "end of input";
  return "'" + token.text + "'";
}

bool Tokenize(const std::string& text, std::vector<Token>* tokens, std::string* error) {
  tokens->clear();
  size_t i = 0;
  while (i < text.size()) {
    const char c = text[i];
    if (IsSpace(c)) {
      ++i;
      continue;
    }
    Token token;
    token.position = static_cast<int>(i) + 1;
    if (IsDigit(c) || c == '.') {
      if (!ReadNumber(text, &i, &token, error)) return false;
      tokens->push_back(std::move(token));
      continue;
    }
    if (IsIdentifierStart(c)) {
      const size_t start = i;
      while (i < text.size() && IsIdentifierPart(text[i])) ++i;
      token.kind = TokenKind::kIdentifier;
      token.text = text.substr(start, i - start);
      tokens->push_back(std::move(token));
      continue;
    }
    switch (c) {
      case '+':
        token.kind = TokenKind::kPlus;
        break;
      case '-':
        token.kind = TokenKind::kMinus;
        break;
      case '*':
        token.kind = TokenKind::kStar;
        break;
      case '/':
        token.kind = TokenKind::kSlash;
        break;
      case '^':
        token.kind = TokenKind::kCaret;
        break;
      case '(':
        token.kind = TokenKind::kLeftParen;
        break;
      case ')':
        token.kind = TokenKind::kRightParen;
        break;
      default:
        return Fail(token.position,
                    "unexpected " + DescribeCharacter(c) +
                        ": expected a number, a name, an operator (+ - * / ^) or a parenthesis",
                    error);
    }
    token.text = std::string(1, c);
    tokens->push_back(std::move(token));
    ++i;
  }
  Token end;
  end.kind = TokenKind::kEnd;
  end.position = static_cast<int>(text.size()) + 1;
  tokens->push_back(std::move(end));
  return true;
}

}  // namespace internal
}  // namespace foothold
