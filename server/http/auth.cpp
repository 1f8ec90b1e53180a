#include "server/http/auth.h"

#include <fstream>

namespace foothold {
namespace {

std::string Trim(const std::string& text) {
  const size_t begin = text.find_first_not_of(" \t\r\n");
  if (begin == std::string::npos) return "";
  const size_t end = text.find_last_not_of(" \t\r\n");
  return text.substr(begin, end - begin + 1);
}

// Compares every byte of the longer length so timing reveals neither a prefix nor where
// the strings first differ.
bool ConstantTimeEquals(const std::string& a, const std::string& b) {
  const size_t length = a.size() > b.size() ? a.size() : b.size();
  unsigned char difference = a.size() == b.size() ? 0 : 1;
  for (size_t i = 0; i < length; ++i) {
    const unsigned char x = i < a.size() ? static_cast<unsigned char>(a[i]) : 0;
    const unsigned char y = i < b.size() ? static_cast<unsigned char>(b[i]) : 0;
    difference |= static_cast<unsigned char>(x ^ y);
  }
  return difference == 0;
}

}  // namespace

bool TokenAuth::LoadFile(const std::string& path, std::string* error) {
  std::ifstream in(path);
  if (!in) {
    *error = "token file '" + path + "': cannot be read";
    return false;
  }
  std::string line;
  int number = 0;
  while (std::getline(in, line)) {
    ++number;
    const std::string token = Trim(line);
    if (token.empty() || token[0] == '#') continue;
    if (token.find_first_of(" \t") != std::string::npos) {
      *error = "token file '" + path + "' line " + std::to_string(number) +
               ": a token must not contain spaces";
      return false;
    }
    tokens_.push_back(token);
  }
  if (tokens_.empty()) {
    *error = "token file '" + path + "': no tokens (one a line, '#' starts a comment)";
    return false;
  }
  return true;
}

bool TokenAuth::IsAuthorized(const std::string& authorization) const {
  if (tokens_.empty()) return true;
  const std::string kScheme = "Bearer ";
  if (authorization.size() <= kScheme.size() ||
      authorization.compare(0, kScheme.size(), kScheme) != 0) {
    return false;
  }
  const std::string presented = Trim(authorization.substr(kScheme.size()));
  bool matched = false;
  for (const std::string& token : tokens_) matched |= ConstantTimeEquals(presented, token);
  return matched;
}

}  // namespace foothold
