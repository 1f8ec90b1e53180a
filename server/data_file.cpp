#include "server/data_file.h"

#include <cerrno>
#include <cstring>
#include <fstream>
#include <sstream>

#include "server/json_codec.h"

namespace foothold {
namespace {

bool EndsWith(const std::string& text, const std::string& suffix) {
  return text.size() >= suffix.size() &&
         text.compare(text.size() - suffix.size(), suffix.size(), suffix) == 0;
}

// The first character that is not white space, or '\0'.
char FirstVisible(const std::string& text) {
  for (char c : text) {
    if (c != ' ' && c != '\t' && c != '\r' && c != '\n') return c;
  }
  return '\0';
}

}  // namespace

bool ReadTextFile(const std::string& path, std::string* text, std::string* error) {
  std::ifstream file(path, std::ios::binary);
  if (!file) {
    *error = "cannot open '" + path + "': " + std::strerror(errno);
    return false;
  }
  std::ostringstream contents;
  contents << file.rdbuf();
  if (file.bad()) {
    *error = "cannot read '" + path + "': " + std::strerror(errno);
    return false;
  }
  *text = contents.str();
  return true;
}

bool LoadDataFile(const std::string& path, DataTable* out, std::string* error) {
  std::string text;
  if (!ReadTextFile(path, &text, error)) return false;
  if (FirstVisible(text) == '\0') {
    *error = path + ": the file is empty: expected a header row naming the columns";
    return false;
  }
  std::string detail;
  if (EndsWith(path, ".json") || FirstVisible(text) == '{') {
    Json document;
    if (!ParseJsonText(text, path, &document, error)) return false;
    if (!DecodeDataColumns(document, "data", out, &detail)) {
      *error = path + ": " + detail;
      return false;
    }
    out->SetSourceName(path);
    return true;
  }
  if (!DataTableFromCsv(text, out, &detail)) {
    *error = path + ": " + detail;
    return false;
  }
  out->SetSourceName(path);
  return true;
}

}  // namespace foothold
