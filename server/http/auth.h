#pragma once
// Optional bearer-token authentication. Tokens come from a file, one a line; blank lines
// and lines starting with '#' are ignored. With no tokens every request passes.

#include <string>
#include <vector>

namespace foothold {

class TokenAuth {
 public:
  // Reads the file; false with a message naming the file (and the line) on failure.
  bool LoadFile(const std::string& path, std::string* error);
  void AddToken(const std::string& token) { tokens_.push_back(token); }
  bool IsEnabled() const { return !tokens_.empty(); }
  // The Authorization header value ("Bearer <token>") matches a token. Each comparison
  // takes time independent of where the strings differ.
  bool IsAuthorized(const std::string& authorization) const;

 private:
  std::vector<std::string> tokens_;
};

}  // namespace foothold
