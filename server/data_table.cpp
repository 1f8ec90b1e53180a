#include "server/data_table.h"

#include "server/csv_reader.h"

namespace foothold {

bool DataTable::AddColumn(const std::string& name, std::vector<double> values, std::string* error) {
  if (name.empty()) {
    *error = "a column has an empty name";
    return false;
  }
  if (ColumnIndex(name) >= 0) {
    *error = "column '" + name + "' is given twice";
    return false;
  }
  if (!columns_.empty() && values.size() != columns_[0].size()) {
    *error = "column '" + name + "' has " + std::to_string(values.size()) + " values but column '" +
             names_[0] + "' has " + std::to_string(columns_[0].size());
    return false;
  }
  names_.push_back(name);
  columns_.push_back(std::move(values));
  return true;
}

int DataTable::ColumnIndex(const std::string& name) const {
  for (size_t j = 0; j < names_.size(); ++j) {
    if (names_[j] == name) return static_cast<int>(j);
  }
  return -1;
}

Eigen::MatrixXd DataTable::ToMatrix() const {
  Eigen::MatrixXd matrix(NumRows(), NumColumns());
  for (int j = 0; j < NumColumns(); ++j) {
    for (int i = 0; i < NumRows(); ++i) matrix(i, j) = columns_[j][i];
  }
  return matrix;
}

std::string DataTable::ListColumnNames() const {
  std::string list;
  for (const std::string& name : names_) {
    if (!list.empty()) list += ", ";
    list += name;
  }
  return list.empty() ? "none" : list;
}

std::string DataTable::DescribeCell(int column, int row_index) const {
  const std::string& name = names_[column];
  const std::string prefix = source_name_.empty() ? "" : source_name_ + ": ";
  if (!source_rows_.empty()) {
    return prefix + "row " + std::to_string(source_rows_[row_index]) + ", column '" + name + "'";
  }
  return prefix + "data." + name + "[" + std::to_string(row_index) + "]";
}

std::string DataTable::DescribeRow(int row_index) const {
  const std::string prefix = source_name_.empty() ? "" : source_name_ + ": ";
  if (!source_rows_.empty()) return prefix + "row " + std::to_string(source_rows_[row_index]);
  return prefix + "data row " + std::to_string(row_index);
}

bool DataTableFromCsv(const std::string& text, DataTable* out, std::string* error) {
  CsvDocument document;
  if (!ParseCsv(text, &document, error)) return false;
  if (document.records.empty()) {
    *error = "the header names " + std::to_string(document.header.size()) +
             " columns but no data rows follow";
    return false;
  }
  const size_t num_columns = document.header.size();
  std::vector<std::vector<double>> columns(num_columns);
  std::vector<int> rows;
  rows.reserve(document.records.size());
  for (const CsvRecord& record : document.records) {
    for (size_t j = 0; j < num_columns; ++j) {
      double value = 0;
      std::string cell_error;
      if (!ParseNumberCell(record.fields[j], &value, &cell_error)) {
        *error = "row " + std::to_string(record.row) + ", column '" + document.header[j] +
                 "': " + cell_error;
        return false;
      }
      columns[j].push_back(value);
    }
    rows.push_back(record.row);
  }
  DataTable table;
  for (size_t j = 0; j < num_columns; ++j) {
    if (!table.AddColumn(document.header[j], std::move(columns[j]), error)) return false;
  }
  table.SetSourceRows(std::move(rows));
  *out = std::move(table);
  return true;
}

}  // namespace foothold
