#pragma once
// Named numeric columns of equal length: what a request's "data" holds before the model
// decides which columns are predictors, response and sigma.

#include <Eigen/Core>
#include <string>
#include <vector>

namespace foothold {

class DataTable {
 public:
  // Appends a column. False with a message when the name is empty or taken, or the length
  // differs from the columns already present. Values must already be finite.
  bool AddColumn(const std::string& name, std::vector<double> values, std::string* error);

  int NumRows() const { return columns_.empty() ? 0 : static_cast<int>(columns_[0].size()); }
  int NumColumns() const { return static_cast<int>(names_.size()); }
  bool IsEmpty() const { return names_.empty(); }
  const std::vector<std::string>& ColumnNames() const { return names_; }
  // Index of a column by name, or -1.
  int ColumnIndex(const std::string& name) const;
  const std::vector<double>& Column(int index) const { return columns_[index]; }
  // n x k matrix, column j = ColumnNames()[j].
  Eigen::MatrixXd ToMatrix() const;
  // "x, y, sigma" for messages that list what is there.
  std::string ListColumnNames() const;

  // Where a value came from, in the words of its source: "row 5, column 'y'" for CSV
  // (spreadsheet rows, header = 1) or "data.y[3]" for columns given as arrays.
  std::string DescribeCell(int column, int row_index) const;
  // The same for a whole row: "data.csv: row 5" or "data row 3" (0-based, for arrays).
  std::string DescribeRow(int row_index) const;
  // Records the CSV row number of each data row, switching DescribeCell to CSV wording.
  void SetSourceRows(std::vector<int> rows) { source_rows_ = std::move(rows); }
  // Names the file the rows came from; DescribeCell then starts with "PATH: ".
  void SetSourceName(std::string name) { source_name_ = std::move(name); }

 private:
  std::vector<std::string> names_;
  std::vector<std::vector<double>> columns_;
  std::vector<int> source_rows_;  // empty unless read from CSV
  std::string source_name_;       // file path, or empty
};

// Builds a table from CSV text with a header row (see csv_reader.h). Every cell must be a
// finite number; the message names the row and column of the first that is not.
bool DataTableFromCsv(const std::string& text, DataTable* out, std::string* error);

}  // namespace foothold
