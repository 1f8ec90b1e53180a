#pragma once
// Reading the NIST StRD nonlinear regression problems: index.json (model, starts, certified
// values) and the .dat files in NIST's own format (CRLF, header naming the data lines).

#include <Eigen/Core>
#include <cstdlib>
#include <fstream>
#include <nlohmann/json.hpp>
#include <regex>
#include <sstream>
#include <string>
#include <vector>

#include "engine/model/dataset.h"
#include "engine/model/expression_model.h"

namespace foothold {
namespace certification {

// One parameter line of a .dat file: "  b1 =   500   250   2.3894212918E+02  2.7070075241E+00".
struct NistParameterLine {
  int index = 0;  // 1-based, from "b<index>"
  double start1 = 0;
  double start2 = 0;
  double certified = 0;
  double certified_sd = 0;
};

struct NistProblem {
  // From index.json.
  std::string name;
  std::string file;
  std::string difficulty;  // "lower" | "average" | "higher"
  std::string model;       // right-hand side in foothold's expression grammar
  std::string response;    // "y" or a column expression such as "log(y)"
  std::vector<std::string> predictors;
  int num_params = 0;
  int num_obs = 0;
  std::vector<double> start1;
  std::vector<double> start2;
  std::vector<double> certified;
  std::vector<double> certified_sd;
  double certified_rss = 0;
  double certified_rsd = 0;
  int dof = 0;
  std::vector<std::string> notes;

  // From the .dat file.
  std::vector<std::string> data_columns;  // from the "Data:  y  x" line, e.g. {"y", "x"}
  int data_first_line = 0;                // 1-based, from "Data (lines a to b)"
  int data_last_line = 0;
  int declared_observations = 0;  // "Number of Observations:"
  std::vector<NistParameterLine> parameter_lines;
  // num_obs x data_columns.size(); column 0 is y.
  Eigen::MatrixXd table;

  std::vector<std::string> ParameterNames() const {
    std::vector<std::string> names;
    for (int j = 1; j <= num_params; ++j) names.push_back("b" + std::to_string(j));
    return names;
  }
};

inline bool ReadTextFile(const std::string& path, std::string* text, std::string* error) {
  std::ifstream in(path, std::ios::binary);
  if (!in) {
    *error = "cannot open " + path;
    return false;
  }
  std::ostringstream buffer;
  buffer << in.rdbuf();
  *text = buffer.str();
  return true;
}

// Splits on '\n' and removes a trailing '\r' from each line (NIST files are CRLF).
inline std::vector<std::string> SplitLines(const std::string& text) {
  std::vector<std::string> lines;
  std::string line;
  std::istringstream in(text);
  while (std::getline(in, line)) {
    if (!line.empty() && line.back() == '\r') line.pop_back();
    lines.push_back(line);
  }
  return lines;
}

inline std::vector<std::string> SplitWords(const std::string& text) {
  std::vector<std::string> words;
  std::istringstream in(text);
  std::string word;
  while (in >> word) words.push_back(word);
  return words;
}

inline bool ParseDouble(const std::string& word, double* value) {
  const char* begin = word.c_str();
  char* end = nullptr;
  *value = std::strtod(begin, &end);
  return end != begin && *end == '\0';
}

// Reads the data block and the parameter lines of one .dat file into `problem`.
inline bool ReadNistDatFile(const std::string& path, NistProblem* problem, std::string* error) {
  std::string text;
  if (!ReadTextFile(path, &text, error)) return false;
  const std::vector<std::string> lines = SplitLines(text);

  const std::regex data_range(R"(^\s*Data\s+\(lines\s+(\d+)\s+to\s+(\d+)\))");
  const std::regex observations(R"(^\s*Number of Observations:\s+(\d+))");
  const std::regex parameter(R"(^\s*b(\d+)\s*=\s*(\S+)\s+(\S+)\s+(\S+)\s+(\S+)\s*$)");
  const std::regex data_header(R"(^\s*Data:\s+(y(\s+\w+)+)\s*$)");
  std::smatch match;
  for (const std::string& line : lines) {
    if (std::regex_search(line, match, data_range)) {
      problem->data_first_line = std::stoi(match[1]);
      problem->data_last_line = std::stoi(match[2]);
    } else if (std::regex_search(line, match, observations)) {
      problem->declared_observations = std::stoi(match[1]);
    } else if (std::regex_search(line, match, parameter)) {
      NistParameterLine p;
      p.index = std::stoi(match[1]);
      if (!ParseDouble(match[2], &p.start1) || !ParseDouble(match[3], &p.start2) ||
          !ParseDouble(match[4], &p.certified) || !ParseDouble(match[5], &p.certified_sd)) {
        *error = path + ": cannot read parameter line '" + line + "'";
        return false;
      }
      problem->parameter_lines.push_back(p);
    } else if (std::regex_search(line, match, data_header)) {
      problem->data_columns = SplitWords(match[1]);
    }
  }
  if (problem->data_first_line <= 0 || problem->data_last_line < problem->data_first_line ||
      problem->data_last_line > static_cast<int>(lines.size())) {
    *error = path + ": no valid 'Data (lines a to b)' header";
    return false;
  }
  if (problem->data_columns.empty()) {
    *error = path + ": no 'Data:  y  x ...' column line";
    return false;
  }
  const int rows = problem->data_last_line - problem->data_first_line + 1;
  const int cols = static_cast<int>(problem->data_columns.size());
  problem->table.resize(rows, cols);
  for (int r = 0; r < rows; ++r) {
    const int line_number = problem->data_first_line + r;  // 1-based
    const std::vector<std::string> words = SplitWords(lines[line_number - 1]);
    if (static_cast<int>(words.size()) != cols) {
      *error = path + ": line " + std::to_string(line_number) + " has " +
               std::to_string(words.size()) + " numbers, expected " + std::to_string(cols);
      return false;
    }
    for (int c = 0; c < cols; ++c) {
      if (!ParseDouble(words[c], &problem->table(r, c))) {
        *error = path + ": line " + std::to_string(line_number) + " word '" + words[c] +
                 "' is not a number";
        return false;
      }
    }
  }
  return true;
}

// Reads index.json and every .dat file it names from `directory`.
inline bool LoadNistProblems(const std::string& directory, std::vector<NistProblem>* problems,
                             std::string* error) {
  std::string text;
  if (!ReadTextFile(directory + "/index.json", &text, error)) return false;
  nlohmann::json index;
  try {
    index = nlohmann::json::parse(text);
    for (const nlohmann::json& entry : index) {
      NistProblem p;
      p.name = entry.at("name").get<std::string>();
      p.file = entry.at("file").get<std::string>();
      p.difficulty = entry.at("difficulty").get<std::string>();
      p.model = entry.at("model").get<std::string>();
      p.response = entry.at("response").get<std::string>();
      p.predictors = entry.at("predictors").get<std::vector<std::string>>();
      p.num_params = entry.at("n_params").get<int>();
      p.num_obs = entry.at("n_obs").get<int>();
      p.start1 = entry.at("start1").get<std::vector<double>>();
      p.start2 = entry.at("start2").get<std::vector<double>>();
      p.certified = entry.at("certified").get<std::vector<double>>();
      p.certified_sd = entry.at("certified_sd").get<std::vector<double>>();
      p.certified_rss = entry.at("certified_rss").get<double>();
      p.certified_rsd = entry.at("certified_rsd").get<double>();
      p.dof = entry.at("dof").get<int>();
      if (entry.contains("notes")) p.notes = entry.at("notes").get<std::vector<std::string>>();
      if (!ReadNistDatFile(directory + "/" + p.file, &p, error)) return false;
      problems->push_back(std::move(p));
    }
  } catch (const nlohmann::json::exception& e) {
    *error = directory + "/index.json: " + e.what();
    return false;
  }
  return true;
}

// The dataset a problem's model reads: the predictor columns by name, and the response from
// the problem's response expression over all data columns (EvaluateColumnExpression, the path
// a user's response expression such as "log(y)" takes).
inline bool BuildNistDataset(const NistProblem& p, Dataset* data, std::string* error) {
  data->predictor_names = p.predictors;
  data->predictors.resize(p.table.rows(), static_cast<Eigen::Index>(p.predictors.size()));
  for (size_t j = 0; j < p.predictors.size(); ++j) {
    size_t column = 0;
    while (column < p.data_columns.size() && p.data_columns[column] != p.predictors[j]) ++column;
    if (column == p.data_columns.size()) {
      *error = "predictor '" + p.predictors[j] + "' is not a data column";
      return false;
    }
    data->predictors.col(j) = p.table.col(column);
  }
  return EvaluateColumnExpression(p.response, p.data_columns, p.table, &data->response, error);
}

}  // namespace certification
}  // namespace foothold
