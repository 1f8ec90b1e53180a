#pragma once
// Loads a data file for the CLI: CSV with a header row, or JSON holding an object of
// columns. Messages start with the path so the user sees which file is wrong.

#include <string>

#include "server/data_table.h"

namespace foothold {

// Reads the whole file. False with "cannot open 'PATH': <reason>" when it cannot.
bool ReadTextFile(const std::string& path, std::string* text, std::string* error);

// JSON when the path ends in .json or the text starts with '{'; CSV otherwise.
bool LoadDataFile(const std::string& path, DataTable* out, std::string* error);

}  // namespace foothold
