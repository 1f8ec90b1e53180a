#include "server/csv_reader.h"

#include <charconv>
#include <cmath>
#include <set>
#include <sstream>
#include <system_error>

namespace foothold {
namespace {

bool IsBlank(char c) { return c == ' ' || c == '\t'; }

std::string Trim(const std::string& text) {
  size_t begin = 0;
  size_t end = text.size();
  while (begin < end && IsBlank(text[begin])) ++begin;
  while (end > begin && IsBlank(text[end - 1])) --end;
  return text.substr(begin, end - begin);
}

// A cursor over the text that knows which line it is on.
class CsvScanner {
 public:
  CsvScanner(const std::string& text, char delimiter) : text_(text), delimiter_(delimiter) {
    // A UTF-8 byte order mark is an encoding marker, not part of the first header name.
    if (text_.compare(0, 3, "\xEF\xBB\xBF") == 0) pos_ = 3;
  }

  bool AtEnd() const { return pos_ >= text_.size(); }
  int Line() const { return line_; }

  // Reads one record starting at the current position. `fields` is empty for a blank or
  // comment line. False with a message on malformed quoting.
  bool ReadRecord(std::vector<std::string>* fields, std::string* error) {
    fields->clear();
    const int start_line = line_;
    if (Peek() == '#') {
      SkipToLineEnd();
      return true;
    }
    bool any_content = false;
    while (true) {
      std::string field;
      bool quoted = false;
      if (!ReadField(&field, &quoted, start_line, error)) return false;
      any_content = any_content || quoted || !field.empty();
      fields->push_back(std::move(field));
      if (AtEnd()) break;
      const char c = text_[pos_];
      if (c == delimiter_) {
        ++pos_;
        continue;
      }
      ConsumeLineEnd();
      break;
    }
    if (!any_content && fields->size() == 1) fields->clear();
    return true;
  }

 private:
  // Spaces around a field, and tabs unless the tab separates fields.
  bool IsPadding(char c) const { return c == ' ' || (c == '\t' && delimiter_ != '\t'); }

  char Peek() const { return AtEnd() ? '\0' : text_[pos_]; }

  bool AtLineEnd() const { return AtEnd() || text_[pos_] == '\n' || text_[pos_] == '\r'; }

  void ConsumeLineEnd() {
    if (Peek() == '\r') ++pos_;
    if (Peek() == '\n') ++pos_;
    ++line_;
  }

  void SkipToLineEnd() {
    while (!AtLineEnd()) ++pos_;
    if (!AtEnd()) ConsumeLineEnd();
  }

  bool ReadField(std::string* field, bool* quoted, int start_line, std::string* error) {
    size_t probe = pos_;
    while (probe < text_.size() && IsPadding(text_[probe])) ++probe;
    if (probe < text_.size() && text_[probe] == '"') {
      pos_ = probe + 1;
      *quoted = true;
      return ReadQuoted(field, start_line, error);
    }
    const size_t begin = pos_;
    while (!AtLineEnd() && text_[pos_] != delimiter_) ++pos_;
    *field = Trim(text_.substr(begin, pos_ - begin));
    return true;
  }

  bool ReadQuoted(std::string* field, int start_line, std::string* error) {
    while (true) {
      if (AtEnd()) {
        *error = "row " + std::to_string(start_line) + ": a quoted field is never closed";
        return false;
      }
      const char c = text_[pos_++];
      if (c == '"') {
        if (Peek() == '"') {
          field->push_back('"');
          ++pos_;
          continue;
        }
        break;
      }
      // A line end inside quotes belongs to the field; count it so later rows stay right.
      if (c == '\n') ++line_;
      field->push_back(c);
    }
    while (!AtEnd() && IsPadding(text_[pos_])) ++pos_;
    if (!AtLineEnd() && text_[pos_] != delimiter_) {
      *error = "row " + std::to_string(start_line) + ": unexpected character '" +
               std::string(1, text_[pos_]) + "' after a closing quote: expected '" +
               std::string(1, delimiter_) + "' or a line end";
      return false;
    }
    return true;
  }

  const std::string& text_;
  const char delimiter_;
  size_t pos_ = 0;
  int line_ = 1;
};

}  // namespace

char DetectDelimiter(const std::string& text) {
  size_t begin = 0;
  while (begin < text.size()) {
    size_t end = text.find('\n', begin);
    if (end == std::string::npos) end = text.size();
    const std::string line = Trim(text.substr(begin, end - begin));
    begin = end + 1;
    if (line.empty() || line == "\r" || line[0] == '#') continue;
    // Instruments write tab- or semicolon-separated files; a comma in the header wins.
    if (line.find(',') != std::string::npos) return ',';
    if (line.find('\t') != std::string::npos) return '\t';
    if (line.find(';') != std::string::npos) return ';';
    return ',';
  }
  return ',';
}

bool ParseCsv(const std::string& text, CsvDocument* out, std::string* error) {
  CsvDocument document;
  CsvScanner scanner(text, DetectDelimiter(text));
  bool have_header = false;
  std::vector<std::string> fields;
  while (!scanner.AtEnd()) {
    const int row = scanner.Line();
    if (!scanner.ReadRecord(&fields, error)) return false;
    if (fields.empty()) continue;
    if (!have_header) {
      std::set<std::string> seen;
      for (size_t j = 0; j < fields.size(); ++j) {
        if (fields[j].empty()) {
          *error = "row " + std::to_string(row) + ": header field " + std::to_string(j + 1) +
                   " is empty: every column needs a name";
          return false;
        }
        if (!seen.insert(fields[j]).second) {
          *error =
              "row " + std::to_string(row) + ": the header names column '" + fields[j] + "' twice";
          return false;
        }
      }
      document.header = fields;
      have_header = true;
      continue;
    }
    if (fields.size() != document.header.size()) {
      *error = "row " + std::to_string(row) + " has " + std::to_string(fields.size()) +
               " fields but the header has " + std::to_string(document.header.size());
      return false;
    }
    document.records.push_back(CsvRecord{row, fields});
  }
  if (!have_header) {
    *error = "the file is empty: expected a header row naming the columns";
    return false;
  }
  *out = std::move(document);
  return true;
}

bool ParseNumberCell(const std::string& cell, double* value, std::string* error) {
  if (cell.empty()) {
    *error = "the cell is empty: expected a number";
    return false;
  }
  const char* begin = cell.data();
  const char* end = cell.data() + cell.size();
  // from_chars takes no leading '+', which people and instruments do write.
  if (*begin == '+' && cell.size() > 1 && begin[1] != '-') ++begin;
  double parsed = 0;
  const std::from_chars_result result = std::from_chars(begin, end, parsed);
  if (result.ec == std::errc::result_out_of_range) {
    *error = "'" + cell + "' is out of the range of a double";
    return false;
  }
  if (result.ec != std::errc() || result.ptr != end) {
    *error = "'" + cell + "' is not a number";
    return false;
  }
  if (!std::isfinite(parsed)) {
    *error = "'" + cell + "' is not a finite number";
    return false;
  }
  *value = parsed;
  return true;
}

}  // namespace foothold
