// CSV reading and numeric tables: quoting, line ends, row numbering, error wording.
#include "server/csv_reader.h"

#include <catch2/catch.hpp>

#include "server/data_table.h"

using foothold::CsvDocument;
using foothold::DataTable;
using foothold::DataTableFromCsv;
using foothold::ParseCsv;
using foothold::ParseNumberCell;

TEST_CASE("CsvReader: header and records with spreadsheet row numbers", "[server]") {
  CsvDocument document;
  std::string error;
  REQUIRE(ParseCsv("x,y\n1,2\n3,4\n", &document, &error));
  REQUIRE(document.header == std::vector<std::string>{"x", "y"});
  REQUIRE(document.records.size() == 2);
  CHECK(document.records[0].row == 2);
  CHECK(document.records[1].row == 3);
  CHECK(document.records[1].fields == std::vector<std::string>{"3", "4"});
}

TEST_CASE("CsvReader: CRLF, byte order mark, spaces and trailing blank lines", "[server]") {
  CsvDocument document;
  std::string error;
  REQUIRE(ParseCsv("\xEF\xBB\xBFx , y\r\n 1 ,\t2\r\n\r\n3,4\r\n\r\n\n", &document, &error));
  CHECK(document.header == std::vector<std::string>{"x", "y"});
  REQUIRE(document.records.size() == 2);
  CHECK(document.records[0].fields == std::vector<std::string>{"1", "2"});
  // The blank line in the middle is skipped but still counted.
  CHECK(document.records[1].row == 4);
}

TEST_CASE("CsvReader: quoted fields with commas, escaped quotes and line breaks", "[server]") {
  CsvDocument document;
  std::string error;
  REQUIRE(
      ParseCsv("\"time, s\",\"say \"\"hi\"\"\"\n\"1\",\"two\nlines\"\n5,6\n", &document, &error));
  CHECK(document.header == std::vector<std::string>{"time, s", "say \"hi\""});
  REQUIRE(document.records.size() == 2);
  CHECK(document.records[0].fields[1] == "two\nlines");
  // The quoted line break moved the next record to line 4.
  CHECK(document.records[1].row == 4);
}

TEST_CASE("CsvReader: comment lines are skipped", "[server]") {
  CsvDocument document;
  std::string error;
  REQUIRE(ParseCsv("# instrument 7\nx,y\n# calibrated\n1,2\n", &document, &error));
  CHECK(document.header == std::vector<std::string>{"x", "y"});
  REQUIRE(document.records.size() == 1);
  CHECK(document.records[0].row == 4);
}

TEST_CASE("CsvReader: malformed text is named by row", "[server]") {
  CsvDocument document;
  std::string error;
  CHECK_FALSE(ParseCsv("x,y,z\n1,2,3\n4,5\n", &document, &error));
  CHECK(error == "row 3 has 2 fields but the header has 3");
  CHECK_FALSE(ParseCsv("x,y\n1,\"2\n", &document, &error));
  CHECK(error == "row 2: a quoted field is never closed");
  CHECK_FALSE(ParseCsv("x,y\n1,\"2\"3\n", &document, &error));
  CHECK(error.find("row 2: unexpected character '3' after a closing quote") == 0);
  CHECK_FALSE(ParseCsv("x,,y\n", &document, &error));
  CHECK(error == "row 1: header field 2 is empty: every column needs a name");
  CHECK_FALSE(ParseCsv("x,y,x\n", &document, &error));
  CHECK(error == "row 1: the header names column 'x' twice");
  CHECK_FALSE(ParseCsv("\n\n", &document, &error));
  CHECK(error == "the file is empty: expected a header row naming the columns");
}

TEST_CASE("CsvReader: number cells accept signs and exponents only when finite", "[server]") {
  double value = 0;
  std::string error;
  CHECK(ParseNumberCell("+1.5e3", &value, &error));
  CHECK(value == 1500.0);
  CHECK(ParseNumberCell("-.25", &value, &error));
  CHECK(value == -0.25);
  CHECK_FALSE(ParseNumberCell("abc", &value, &error));
  CHECK(error == "'abc' is not a number");
  CHECK_FALSE(ParseNumberCell("1.5x", &value, &error));
  CHECK(error == "'1.5x' is not a number");
  CHECK_FALSE(ParseNumberCell("", &value, &error));
  CHECK(error == "the cell is empty: expected a number");
  CHECK_FALSE(ParseNumberCell("NaN", &value, &error));
  CHECK(error == "'NaN' is not a finite number");
  CHECK_FALSE(ParseNumberCell("-inf", &value, &error));
  CHECK(error == "'-inf' is not a finite number");
  CHECK_FALSE(ParseNumberCell("1e400", &value, &error));
  CHECK(error == "'1e400' is out of the range of a double");
}

TEST_CASE("DataTable: CSV cells become named columns", "[server]") {
  DataTable table;
  std::string error;
  REQUIRE(DataTableFromCsv("x,y,sigma\n1,2,0.5\n3,4,0.5\n", &table, &error));
  CHECK(table.NumRows() == 2);
  CHECK(table.ColumnNames() == std::vector<std::string>{"x", "y", "sigma"});
  CHECK(table.ColumnIndex("sigma") == 2);
  CHECK(table.ColumnIndex("z") == -1);
  CHECK(table.Column(1) == std::vector<double>{2, 4});
  CHECK(table.ToMatrix()(1, 0) == 3.0);
  CHECK(table.DescribeCell(1, 1) == "row 3, column 'y'");
}

TEST_CASE("DataTable: a bad cell is named by row and column", "[server]") {
  DataTable table;
  std::string error;
  CHECK_FALSE(DataTableFromCsv("x,y\n1,2\n2,3\n3,4\n4,5\n5,abc\n", &table, &error));
  CHECK(error == "row 6, column 'y': 'abc' is not a number");
  CHECK_FALSE(DataTableFromCsv("x,y\n1,Inf\n", &table, &error));
  CHECK(error == "row 2, column 'y': 'Inf' is not a finite number");
  CHECK_FALSE(DataTableFromCsv("x,y\n", &table, &error));
  CHECK(error == "the header names 2 columns but no data rows follow");
}

TEST_CASE("DataTable: columns must agree in length and name", "[server]") {
  DataTable table;
  std::string error;
  REQUIRE(table.AddColumn("x", {1, 2, 3}, &error));
  CHECK_FALSE(table.AddColumn("y", {1, 2}, &error));
  CHECK(error == "column 'y' has 2 values but column 'x' has 3");
  CHECK_FALSE(table.AddColumn("x", {1, 2, 3}, &error));
  CHECK(error == "column 'x' is given twice");
  CHECK(table.DescribeCell(0, 2) == "data.x[2]");
}

TEST_CASE("CsvReader: tab- and semicolon-separated files are read by their header", "[server]") {
  CsvDocument document;
  std::string error;
  CHECK(foothold::DetectDelimiter("# note, with a comma\nx\ty\n1\t2\n") == '\t');
  REQUIRE(ParseCsv("x\ty\n1\t\"2\"\n\t3\n", &document, &error));
  CHECK(document.header == std::vector<std::string>{"x", "y"});
  REQUIRE(document.records.size() == 2);
  CHECK(document.records[0].fields == std::vector<std::string>{"1", "2"});
  CHECK(document.records[1].fields == std::vector<std::string>{"", "3"});
  REQUIRE(ParseCsv("x;y\r\n1;2\r\n", &document, &error));
  CHECK(document.records[0].fields == std::vector<std::string>{"1", "2"});
  DataTable table;
  CHECK_FALSE(DataTableFromCsv("x;y\n1,5;2\n", &table, &error));
  CHECK(error == "row 2, column 'x': '1,5' is not a number");
}
