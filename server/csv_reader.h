#pragma once
// Reads comma-separated text with a header row into raw string fields.
//
// Rows are numbered as a spreadsheet numbers them: the header is row 1, so in a file
// without multi-line quoted fields "row N" is line N. Blank lines and lines starting
// with '#' are skipped but still counted.

#include <string>
#include <vector>

namespace foothold {

struct CsvRecord {
  int row = 0;  // spreadsheet-style row number (header = 1)
  std::vector<std::string> fields;
};

struct CsvDocument {
  std::vector<std::string> header;
  std::vector<CsvRecord> records;
};

// The field separator: ',' when the header line has a comma, else a tab, else ';'.
char DetectDelimiter(const std::string& text);

// Splits `text` into a header and records, fields separated by DetectDelimiter(text).
// Accepts LF and CRLF line ends, a UTF-8 byte
// order mark, quoted fields with "" escapes (which may span lines) and trailing blank
// lines; unquoted fields are trimmed of spaces and tabs. False with a message naming the
// row on a field-count mismatch, an unterminated quote, an empty or duplicated header
// name, or text without a header.
bool ParseCsv(const std::string& text, CsvDocument* out, std::string* error);

// Parses one numeric cell. Accepts decimal and exponent forms with an optional sign;
// rejects empty cells, trailing garbage and non-finite values ("nan", "inf").
// On failure `error` says what the cell holds and what was expected, without location.
bool ParseNumberCell(const std::string& cell, double* value, std::string* error);

}  // namespace foothold
