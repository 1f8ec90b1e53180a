#include "server/fit_service.h"

#include <chrono>
#include <cmath>
#include <limits>
#include <regex>
#include <set>
#include <sstream>

#include "engine/model/expression_model.h"
#include "heuristics/families/catalogue.h"
#include "server/verdict.h"

namespace foothold {
namespace {

constexpr double kInfinity = std::numeric_limits<double>::infinity();

std::string FormatNumber(double value) {
  std::ostringstream out;
  out << value;
  return out.str();
}

std::string Join(const std::vector<std::string>& names) {
  std::string joined;
  for (const std::string& name : names) {
    if (!joined.empty()) joined += ", ";
    joined += name;
  }
  return joined;
}

bool IsIdentifier(const std::string& text) {
  static const std::regex kIdentifier("[A-Za-z_][A-Za-z0-9_]*");
  return std::regex_match(text, kIdentifier);
}

// Identifiers in an expression text; enough to know which columns a response reads.
std::set<std::string> IdentifiersIn(const std::string& text) {
  static const std::regex kIdentifier("[A-Za-z_][A-Za-z0-9_]*");
  std::set<std::string> names;
  for (auto it = std::sregex_iterator(text.begin(), text.end(), kIdentifier);
       it != std::sregex_iterator(); ++it) {
    // Skip the exponent letter of a number such as 1e5.
    const size_t at = static_cast<size_t>(it->position());
    if (at > 0 && (std::isdigit(static_cast<unsigned char>(text[at - 1])) || text[at - 1] == '.'))
      continue;
    names.insert(it->str());
  }
  return names;
}

// The response vector and the columns it used (which are then no predictors).
bool BuildResponse(const FitRequest& request, Eigen::VectorXd* response,
                   std::set<std::string>* used_columns, std::string* error) {
  const DataTable& table = request.data;
  const int index = table.ColumnIndex(request.response);
  if (index >= 0) {
    *response = Eigen::Map<const Eigen::VectorXd>(table.Column(index).data(), table.NumRows());
    used_columns->insert(request.response);
    return true;
  }
  if (IsIdentifier(request.response)) {
    *error = "response: the data have no column '" + request.response +
             "' (columns: " + table.ListColumnNames() + ")";
    return false;
  }
  std::string expression_error;
  if (!EvaluateColumnExpression(request.response, table.ColumnNames(), table.ToMatrix(), response,
                                &expression_error)) {
    *error = "response '" + request.response + "': " + expression_error;
    return false;
  }
  for (const std::string& name : IdentifiersIn(request.response)) {
    if (table.ColumnIndex(name) >= 0) used_columns->insert(name);
  }
  return true;
}

bool BuildSigma(const FitRequest& request, Eigen::VectorXd* sigma, std::string* column,
                std::string* error) {
  const DataTable& table = request.data;
  std::string name = request.sigma_column;
  if (name.empty() && table.ColumnIndex("sigma") >= 0) name = "sigma";
  if (name.empty()) {
    if (!request.sigma_mode.empty()) {
      *error = "sigma_mode = '" + request.sigma_mode +
               "' needs per-point sigma, but the data have no sigma column (columns: " +
               table.ListColumnNames() + ")";
      return false;
    }
    sigma->resize(0);
    column->clear();
    return true;
  }
  const int index = table.ColumnIndex(name);
  if (index < 0) {
    *error = "sigma_column: the data have no column '" + name +
             "' (columns: " + table.ListColumnNames() + ")";
    return false;
  }
  const std::vector<double>& values = table.Column(index);
  for (int i = 0; i < table.NumRows(); ++i) {
    if (!(values[i] > 0)) {
      *error = table.DescribeCell(index, i) + ": sigma " + FormatNumber(values[i]) +
               " is not > 0; every sigma must be a positive standard deviation";
      return false;
    }
  }
  *sigma = Eigen::Map<const Eigen::VectorXd>(values.data(), table.NumRows());
  *column = name;
  return true;
}

// Builds the model; `predictor_columns` are the columns an expression may read.
bool BuildModel(const ModelSpec& spec, const std::vector<std::string>& predictor_columns,
                std::unique_ptr<Model>* model, std::vector<FamilyParameter>* family_parameters,
                std::string* error) {
  if (spec.IsFamily()) {
    const FamilyDescription* description = FindFamily(spec.family);
    if (!description) {
      std::vector<std::string> names;
      for (const FamilyDescription& family : FamilyCatalogue()) names.push_back(family.name);
      *error = "model.family: unknown family '" + spec.family + "' (families: " + Join(names) + ")";
      return false;
    }
    auto takes = [&](const std::string& option) {
      for (const std::string& name : description->options) {
        if (name == option) return true;
      }
      return false;
    };
    if (spec.degree && !takes("degree")) {
      *error = "model.degree: family '" + spec.family + "' takes no degree";
      return false;
    }
    if ((spec.peaks || spec.auto_peaks) && !takes("peaks")) {
      *error = "model.peaks: family '" + spec.family + "' takes no peak count";
      return false;
    }
    if (spec.auto_peaks) {
      *error =
          "model.peaks = 'auto': choosing the peak count from the data is not supported "
          "yet; give a number";
      return false;
    }
    FamilyRequest family_request;
    family_request.name = spec.family;
    if (spec.degree) family_request.degree = *spec.degree;
    if (spec.peaks) family_request.peaks = *spec.peaks;
    FamilyInstance instance;
    std::string family_error;
    if (!InstantiateFamily(family_request, &instance, &family_error)) {
      *error = "model: " + family_error;
      return false;
    }
    *model = std::move(instance.model);
    *family_parameters = std::move(instance.parameters);
    return true;
  }
  std::string parse_error;
  std::unique_ptr<ExpressionModel> expression = ParseExpressionModel(
      spec.expression, predictor_columns, spec.parameters, ExpressionOptions{}, &parse_error);
  if (!expression) {
    *error = "model.expression: " + parse_error;
    return false;
  }
  *model = std::move(expression);
  family_parameters->clear();
  return true;
}

int ParameterIndex(const std::vector<std::string>& names, const std::string& name) {
  for (size_t j = 0; j < names.size(); ++j) {
    if (names[j] == name) return static_cast<int>(j);
  }
  return -1;
}

std::string UnknownParameter(const std::string& field, const std::string& name,
                             const std::vector<std::string>& names) {
  return field + ": unknown parameter '" + name + "' (the model's parameters: " + Join(names) + ")";
}

// Bounds (family defaults, then the request), fixed flags and the start vector.
bool BuildParameters(const FitRequest& request, const std::vector<FamilyParameter>& defaults,
                     Problem* problem, Eigen::VectorXd* start, std::string* error) {
  const std::vector<std::string>& names = problem->model->ParameterNames();
  const int p = static_cast<int>(names.size());
  problem->lower = Eigen::VectorXd::Constant(p, -kInfinity);
  problem->upper = Eigen::VectorXd::Constant(p, kInfinity);
  for (size_t j = 0; j < defaults.size() && static_cast<int>(j) < p; ++j) {
    problem->lower[j] = defaults[j].default_lower;
    problem->upper[j] = defaults[j].default_upper;
  }
  for (const NamedBounds& bounds : request.bounds) {
    const int j = ParameterIndex(names, bounds.name);
    if (j < 0) {
      *error = UnknownParameter("bounds", bounds.name, names);
      return false;
    }
    problem->lower[j] = bounds.lower;
    problem->upper[j] = bounds.upper;
  }
  *start = Eigen::VectorXd::Constant(p, std::numeric_limits<double>::quiet_NaN());
  problem->is_fixed.assign(p, false);
  for (const NamedValue& fixed : request.fix) {
    const int j = ParameterIndex(names, fixed.name);
    if (j < 0) {
      *error = UnknownParameter("fix", fixed.name, names);
      return false;
    }
    problem->is_fixed[j] = true;
    (*start)[j] = fixed.value;
  }
  for (const NamedValue& given : request.start) {
    const int j = ParameterIndex(names, given.name);
    if (j < 0) {
      *error = UnknownParameter("start", given.name, names);
      return false;
    }
    if (problem->is_fixed[j]) {
      *error = "start." + given.name + ": the parameter is also in fix; give it in one place";
      return false;
    }
    (*start)[j] = given.value;
  }
  for (int j = 0; j < p; ++j) {
    const std::string field = (problem->is_fixed[j] ? "fix." : "start.") + names[j];
    if (std::isnan((*start)[j])) {
      *error = "start." + names[j] + ": no start value for parameter '" + names[j] +
               "'; automatic starting guesses are not available yet, so give every free "
               "parameter a start";
      return false;
    }
    if ((*start)[j] < problem->lower[j] || (*start)[j] > problem->upper[j]) {
      *error = field + " = " + FormatNumber((*start)[j]) + " is outside its bounds [" +
               FormatNumber(problem->lower[j]) + ", " + FormatNumber(problem->upper[j]) + "]";
      return false;
    }
  }
  return true;
}

bool BuildDataset(const FitRequest& request, std::vector<std::string>* predictor_columns,
                  Dataset* data, std::string* sigma_column, std::string* error) {
  std::set<std::string> response_columns;
  if (!BuildResponse(request, &data->response, &response_columns, error)) return false;
  if (!BuildSigma(request, &data->sigma, sigma_column, error)) return false;
  const DataTable& table = request.data;
  predictor_columns->clear();
  for (const std::string& name : table.ColumnNames()) {
    if (response_columns.count(name) || name == *sigma_column) continue;
    predictor_columns->push_back(name);
  }
  data->predictor_names = *predictor_columns;
  data->predictors.resize(table.NumRows(), static_cast<Eigen::Index>(predictor_columns->size()));
  for (size_t j = 0; j < predictor_columns->size(); ++j) {
    const std::vector<double>& values = table.Column(table.ColumnIndex((*predictor_columns)[j]));
    data->predictors.col(static_cast<Eigen::Index>(j)) =
        Eigen::Map<const Eigen::VectorXd>(values.data(), table.NumRows());
  }
  return true;
}

}  // namespace

bool PrepareFit(const FitRequest& request, PreparedFit* out, std::string* error) {
  if (!request.Validate(error)) return false;
  PreparedFit prepared;
  std::vector<std::string> predictor_columns;
  Dataset all_columns;
  if (!BuildDataset(request, &predictor_columns, &all_columns, &prepared.sigma_column, error)) {
    return false;
  }
  std::vector<FamilyParameter> family_parameters;
  if (!BuildModel(request.model, predictor_columns, &prepared.model, &family_parameters, error)) {
    return false;
  }
  Problem& problem = prepared.problem;
  problem.model = prepared.model.get();
  std::string select_error;
  if (!all_columns.SelectPredictors(prepared.model->PredictorNames(), &problem.data,
                                    &select_error)) {
    *error = "data: " + select_error + " (columns: " + request.data.ListColumnNames() + ")";
    return false;
  }
  if (!request.sigma_mode.empty()) SigmaModeFromString(request.sigma_mode, &problem.sigma_mode);
  if (!BuildParameters(request, family_parameters, &problem, &prepared.start, error)) return false;

  const int num_free = problem.NumFree();
  if (problem.data.NumPoints() < num_free) {
    std::ostringstream message;
    message << "data: " << problem.data.NumPoints() << " points but the model has " << num_free
            << " free parameters; need at least " << num_free << " points";
    *error = message.str();
    return false;
  }
  std::string problem_error;
  if (!problem.Validate(&problem_error)) {
    *error = "problem: " + problem_error;
    return false;
  }
  LevenbergMarquardtOptions& options = prepared.solver_options;
  options.max_iterations = request.max_iterations;
  options.max_evaluations = request.max_evaluations;
  options.deadline_seconds = request.deadline_seconds;
  std::string options_error;
  if (!options.Validate(&options_error)) {
    *error = "solver options: " + options_error;
    return false;
  }
  *out = std::move(prepared);
  return true;
}

FitOutcome RunPreparedFit(const FitRequest& request, const PreparedFit& prepared) {
  const auto started = std::chrono::steady_clock::now();
  const Problem& problem = prepared.problem;
  FitOutcome outcome;
  outcome.label = request.label;
  outcome.model = request.model;
  outcome.parameter_names = problem.model->ParameterNames();
  outcome.is_fixed = problem.is_fixed;
  outcome.predictor_names = problem.data.predictor_names;
  outcome.response = request.response;
  outcome.sigma_column = prepared.sigma_column;
  outcome.sigma_mode = problem.sigma_mode;
  outcome.seed = request.seed;

  outcome.best = MinimizeLevenbergMarquardt(problem, prepared.start, prepared.solver_options);
  const Eigen::VectorXd& end = outcome.best.parameters.size() == prepared.start.size()
                                   ? outcome.best.parameters
                                   : prepared.start;
  outcome.statistics = ComputeFitStatistics(problem, end);

  const LocalFitSummary& best = outcome.best;
  StartRecord record;
  record.index = 0;
  record.origin = "user";
  record.start = best.start.size() == end.size() ? best.start : prepared.start;
  record.end = end;
  record.initial_rss = best.initial_cost;
  record.rss = best.final_cost;
  record.termination = best.termination;
  record.message = best.message;
  record.num_iterations = best.num_iterations;
  record.num_evaluations = best.num_evaluations;
  record.seconds = best.total_seconds;
  record.converged = best.IsConverged() && std::isfinite(best.final_cost);
  if (record.converged) {
    record.basin = 0;
    Basin basin;
    basin.id = 0;
    basin.rss = outcome.statistics.rss;
    basin.delta_rss = 0;
    basin.num_starts = 1;
    basin.share = 1;
    basin.representative_start = 0;
    basin.parameters = end;
    basin.standard_errors = outcome.statistics.standard_errors;
    basin.has_standard_errors = true;
    outcome.basins.push_back(std::move(basin));
  }
  outcome.starts.push_back(std::move(record));
  outcome.verdict = JudgeFit(outcome);
  outcome.elapsed_ms =
      std::chrono::duration<double, std::milli>(std::chrono::steady_clock::now() - started).count();
  return outcome;
}

bool RunFit(const FitRequest& request, FitOutcome* out, std::string* error) {
  PreparedFit prepared;
  if (!PrepareFit(request, &prepared, error)) return false;
  *out = RunPreparedFit(request, prepared);
  return true;
}

}  // namespace foothold
