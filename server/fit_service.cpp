#include "server/fit_service.h"

#include <algorithm>
#include <cctype>
#include <chrono>
#include <cmath>
#include <limits>
#include <regex>
#include <set>
#include <sstream>

#include "engine/loss/robust_reweighting.h"
#include "engine/model/expression_model.h"
#include "engine/multistart/multistart.h"
#include "engine/solve/local_fit.h"
#include "engine/stats/profile_likelihood.h"
#include "heuristics/families/catalogue.h"
#include "heuristics/guess.h"
#include "server/fit_start.h"
#include "server/verdict.h"

namespace foothold {
namespace {

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

// The engine counts rows from 0; the user thinks in the rows of their file.
std::string RenumberRow(const DataTable& table, const std::string& message) {
  static const std::regex kRow("^row ([0-9]+)");
  std::smatch match;
  if (!std::regex_search(message, match, kRow) || match[1].length() > 9) return message;
  const long index = std::stol(match[1].str());
  if (index < 0 || index >= table.NumRows()) return message;
  return table.DescribeRow(static_cast<int>(index)) + match.suffix().str();
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
    *error = "response '" + request.response + "': " + RenumberRow(table, expression_error);
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

// Builds the model; `predictor_columns` are the columns an expression may read and
// `all_columns` the data a family guesser may look at (to choose "peaks": "auto").
// `spec` is updated with what was resolved (the chosen peak count).
bool BuildModel(const std::vector<std::string>& predictor_columns, const Dataset& all_columns,
                ModelSpec* resolved, FamilyRequest* family_request, std::unique_ptr<Model>* model,
                std::vector<FamilyParameter>* family_parameters, std::string* error) {
  const ModelSpec& spec = *resolved;
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
    family_request->name = spec.family;
    if (spec.degree) family_request->degree = *spec.degree;
    if (spec.peaks) family_request->peaks = *spec.peaks;
    std::string family_error;
    if (spec.auto_peaks) {
      Dataset curve;
      if (!all_columns.SelectPredictors({"x"}, &curve, &family_error) ||
          !ResolveAutoPeaks(curve, family_request, &family_error)) {
        *error = "model.peaks = 'auto': " + family_error;
        return false;
      }
      resolved->peaks = family_request->peaks;
    }
    FamilyInstance instance;
    if (!InstantiateFamily(*family_request, &instance, &family_error)) {
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

// The problem's own checks, then the request's solver limits set and checked in *options.
bool CheckProblemAndSolver(const FitRequest& request, const Problem& problem,
                           LevenbergMarquardtOptions* options, std::string* error) {
  std::string problem_error;
  if (!problem.Validate(&problem_error)) {
    *error = "problem: " + problem_error;
    return false;
  }
  options->max_iterations = request.max_iterations;
  options->max_evaluations = request.max_evaluations;
  options->deadline_seconds = request.deadline_seconds;
  std::string options_error;
  if (!options->Validate(&options_error)) {
    *error = "solver options: " + options_error;
    return false;
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
  FamilyRequest family_request;
  prepared.model_spec = request.model;
  if (!BuildModel(predictor_columns, all_columns, &prepared.model_spec, &family_request,
                  &prepared.model, &family_parameters, error)) {
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
  StartChoice choice;
  const FamilyRequest* family = request.model.IsFamily() ? &family_request : nullptr;
  if (!ChooseStart(request, family, family_parameters, &problem, &choice, error)) return false;
  prepared.start = std::move(choice.start);
  prepared.start_origin = std::move(choice.origin);
  prepared.guessed = std::move(choice.guessed);
  prepared.warnings = std::move(choice.warnings);
  prepared.candidates = std::move(choice.candidates);
  prepared.box = std::move(choice.box);
  if (!CheckProblemAndSolver(request, problem, &prepared.solver_options, error)) return false;
  *out = std::move(prepared);
  return true;
}

namespace {

// The largest peak count "peaks": "auto" may choose (heuristics/guess_family.cpp tries at
// most 8 and needs 3k + 2 parameters with n - (3k + 2) - 1 > 0). Admission checks names
// against the widest model; the count itself is decided when the job runs.
constexpr int kMaxAutoPeaks = 8;

// ChooseStart's checks on what the request gives (server/fit_start.cpp), with its messages,
// but without the guesser: known names, start and fix apart, enough points, given values
// inside their bounds.
bool CheckGivenValues(const FitRequest& request, const std::vector<FamilyParameter>& defaults,
                      Problem* problem, std::string* error) {
  const std::vector<std::string>& names = problem->model->ParameterNames();
  const int p = static_cast<int>(names.size());
  auto index_of = [&](const std::string& name) {
    for (int j = 0; j < p; ++j) {
      if (names[j] == name) return j;
    }
    return -1;
  };
  auto unknown = [&](const std::string& field, const std::string& name) {
    *error =
        field + ": unknown parameter '" + name + "' (the model's parameters: " + Join(names) + ")";
    return false;
  };
  problem->lower = Eigen::VectorXd::Constant(p, -std::numeric_limits<double>::infinity());
  problem->upper = Eigen::VectorXd::Constant(p, std::numeric_limits<double>::infinity());
  for (size_t j = 0; j < defaults.size() && static_cast<int>(j) < p; ++j) {
    problem->lower[j] = defaults[j].default_lower;
    problem->upper[j] = defaults[j].default_upper;
  }
  for (const NamedBounds& bounds : request.bounds) {
    const int j = index_of(bounds.name);
    if (j < 0) return unknown("bounds", bounds.name);
    problem->lower[j] = bounds.lower;
    problem->upper[j] = bounds.upper;
  }
  problem->is_fixed.assign(p, false);
  Eigen::VectorXd given = Eigen::VectorXd::Constant(p, std::numeric_limits<double>::quiet_NaN());
  for (const NamedValue& fixed : request.fix) {
    const int j = index_of(fixed.name);
    if (j < 0) return unknown("fix", fixed.name);
    problem->is_fixed[j] = true;
    given[j] = fixed.value;
  }
  for (const NamedValue& start : request.start) {
    const int j = index_of(start.name);
    if (j < 0) return unknown("start", start.name);
    if (problem->is_fixed[j]) {
      *error = "start." + start.name + ": the parameter is also in fix; give it in one place";
      return false;
    }
    given[j] = start.value;
  }
  const int num_free = problem->NumFree();
  if (problem->data.NumPoints() < num_free) {
    std::ostringstream message;
    message << "data: " << problem->data.NumPoints() << " points but the model has " << num_free
            << " free parameters; need at least " << num_free << " points";
    *error = message.str();
    return false;
  }
  for (int j = 0; j < p; ++j) {
    if (std::isnan(given[j])) continue;
    if (given[j] < problem->lower[j] || given[j] > problem->upper[j]) {
      *error = (problem->is_fixed[j] ? "fix." : "start.") + names[j] + " = " +
               FormatNumber(given[j]) + " is outside its bounds [" +
               FormatNumber(problem->lower[j]) + ", " + FormatNumber(problem->upper[j]) + "]";
      return false;
    }
  }
  return true;
}

// The dataset, the model of `spec` and the problem's data for `request`: the admission and
// plot paths, with PrepareFit's messages. The problem's bounds are left as they are.
bool BuildModelProblem(const FitRequest& request, ModelSpec spec, std::unique_ptr<Model>* model,
                       std::vector<FamilyParameter>* family_parameters, Problem* problem,
                       std::string* error) {
  std::vector<std::string> predictor_columns;
  Dataset all_columns;
  std::string sigma_column;
  if (!BuildDataset(request, &predictor_columns, &all_columns, &sigma_column, error)) return false;
  FamilyRequest family_request;
  if (!BuildModel(predictor_columns, all_columns, &spec, &family_request, model,
                  family_parameters, error)) {
    return false;
  }
  problem->model = model->get();
  std::string select_error;
  if (!all_columns.SelectPredictors((*model)->PredictorNames(), &problem->data, &select_error)) {
    *error = "data: " + select_error + " (columns: " + request.data.ListColumnNames() + ")";
    return false;
  }
  return true;
}

}  // namespace

bool ValidateFitRequestForAdmission(const FitRequest& request, int* num_parameters,
                                    std::string* error) {
  if (!request.Validate(error)) return false;
  // Resolving "auto" fits every candidate count; admission takes the widest model instead.
  ModelSpec spec = request.model;
  const int auto_limit = std::min(kMaxAutoPeaks, (request.data.NumRows() - 4) / 3);
  if (spec.auto_peaks) {
    spec.auto_peaks = false;
    spec.peaks = std::max(1, auto_limit);
  }
  std::unique_ptr<Model> model;
  std::vector<FamilyParameter> family_parameters;
  Problem problem;
  if (!BuildModelProblem(request, spec, &model, &family_parameters, &problem, error)) {
    return false;
  }
  if (request.model.auto_peaks && auto_limit < 1) {
    *error = "model.peaks = 'auto': " + std::to_string(request.data.NumRows()) +
             " points are too few to compare even one peak by AICc (need >= 7)";
    return false;
  }
  if (!CheckGivenValues(request, family_parameters, &problem, error)) return false;
  LevenbergMarquardtOptions options;
  if (!CheckProblemAndSolver(request, problem, &options, error)) return false;
  *num_parameters = model->NumParameters();
  return true;
}

bool BuildModelAndData(const FitRequest& request, std::unique_ptr<Model>* model, Dataset* data,
                       std::string* error) {
  if (request.model.auto_peaks) {
    *error = "model.peaks = 'auto': the peak count must be resolved first";
    return false;
  }
  std::vector<FamilyParameter> family_parameters;
  Problem problem;
  if (!BuildModelProblem(request, request.model, model, &family_parameters, &problem, error)) {
    return false;
  }
  *data = std::move(problem.data);
  return true;
}

namespace {

FitOutcome DescribeRequest(const FitRequest& request, const PreparedFit& prepared) {
  const Problem& problem = prepared.problem;
  FitOutcome outcome;
  outcome.label = request.label;
  outcome.model = prepared.model_spec;
  outcome.guessed = prepared.guessed;
  outcome.warnings = prepared.warnings;
  outcome.parameter_names = problem.model->ParameterNames();
  outcome.is_fixed = problem.is_fixed;
  outcome.predictor_names = problem.data.predictor_names;
  outcome.response = request.response;
  outcome.sigma_column = prepared.sigma_column;
  outcome.sigma_mode = problem.sigma_mode;
  outcome.seed = request.seed;
  return outcome;
}

// The local-fit options every start uses: the request's limits, loss and method, the hooks'
// cancellation. The request was validated, so loss and method parse.
LocalFitOptions LocalOptions(const FitRequest& request, const PreparedFit& prepared,
                             const FitHooks& hooks) {
  LocalFitOptions options;
  options.lm = prepared.solver_options;
  LossKindFromString(request.loss, &options.loss);
  LocalMethodFromString(request.method, &options.method);
  options.loss_scale = request.loss_scale;
  if (hooks.should_stop) {
    const IterationCallback previous = options.lm.callback;
    const std::function<bool()> should_stop = hooks.should_stop;
    options.lm.callback = [previous, should_stop](int iteration, double cost) {
      if (should_stop()) return false;
      return previous ? previous(iteration, cost) : true;
    };
  }
  return options;
}

// Statistics at `end`: least squares as always; for a robust loss the scale, the outliers and
// the M-estimator covariance at the end point (docs/robust-fitting.md).
void DescribeEnd(const FitRequest& request, const Problem& problem, const Eigen::VectorXd& end,
                 FitOutcome* outcome) {
  outcome->loss = request.loss;
  outcome->method = request.method;
  LossKind loss = LossKind::kSquared;
  LossKindFromString(request.loss, &loss);
  RobustAssessment assessment;
  if (loss == LossKind::kSquared ||
      !AssessRobustFit(problem, end, loss, request.loss_scale, &assessment)) {
    outcome->statistics = ComputeFitStatistics(problem, end);
    return;
  }
  outcome->statistics = ComputeRobustStatistics(problem, end, assessment);
  outcome->loss_scale = assessment.scale;
  outcome->is_loss_scale_automatic = assessment.is_scale_automatic;
  outcome->outlier_cut = assessment.outlier_cut;
  outcome->outliers = assessment.outliers;
}

// --starts 1: one local fit from the best seeded candidate, described as a one-start run.
void RunSingleStart(const FitRequest& request, const PreparedFit& prepared, const FitHooks& hooks,
                    FitOutcome* outcome) {
  const Problem& problem = prepared.problem;
  if (hooks.on_progress) hooks.on_progress(0, 1, std::numeric_limits<double>::quiet_NaN());
  outcome->best = RunLocalFit(problem, prepared.start, LocalOptions(request, prepared, hooks));
  const LocalFitSummary& best = outcome->best;
  const Eigen::VectorXd& end =
      best.parameters.size() == prepared.start.size() ? best.parameters : prepared.start;
  DescribeEnd(request, problem, end, outcome);

  StartRecord record;
  record.index = 0;
  record.origin = prepared.start_origin;
  record.start = prepared.start;
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
    basin.rss = outcome->statistics.rss;
    basin.num_starts = 1;
    basin.share = 1;
    basin.representative_start = 0;
    basin.parameters = end;
    basin.standard_errors = outcome->statistics.standard_errors;
    basin.has_standard_errors = outcome->statistics.has_standard_errors;
    outcome->basins.push_back(std::move(basin));
    outcome->starts_converged = 1;
    outcome->best_basin_single_start = false;  // one start was all that was asked for
  }
  outcome->starts.push_back(std::move(record));
  outcome->search_message = "a single local fit was requested (starts = 1)";
  if (hooks.on_progress) hooks.on_progress(1, 1, best.final_cost);
}

// The local-fit summary of the multistart's best start, rebuilt from its record.
LocalFitSummary SummaryOf(const StartRecord& record) {
  LocalFitSummary summary;
  summary.termination = record.termination;
  summary.message = record.message;
  summary.start = record.start;
  summary.parameters = record.end;
  summary.initial_cost = record.initial_rss;
  summary.final_cost = record.rss;
  summary.num_iterations = record.num_iterations;
  summary.num_evaluations = record.num_evaluations;
  summary.total_seconds = record.seconds;
  return summary;
}

void RunManyStarts(const FitRequest& request, const PreparedFit& prepared, const FitHooks& hooks,
                   FitOutcome* outcome) {
  const Problem& problem = prepared.problem;
  MultistartOptions options;
  options.max_starts = request.starts;
  options.seed = request.seed;
  if (request.threads > 0) options.num_threads = request.threads;
  options.deadline_seconds = request.deadline_seconds;
  const LocalFitOptions local = LocalOptions(request, prepared, hooks);
  options.local = local.lm;
  options.use_variable_projection = local.use_variable_projection;
  options.method = local.method;
  options.loss = local.loss;
  options.loss_scale = local.loss_scale;
  if (hooks.should_stop) options.is_cancelled = hooks.should_stop;
  if (hooks.on_progress) options.progress = hooks.on_progress;

  const MultistartSummary summary =
      RunMultistart(problem, prepared.candidates, prepared.box, options);
  outcome->search_stop = ToString(summary.stop);
  outcome->search_message = summary.message;
  outcome->starts_planned = summary.num_starts_planned;
  outcome->starts_converged = summary.num_converged;
  outcome->ambiguous_basins = summary.ambiguous_basins;
  outcome->best_basin_single_start = summary.best_basin_single_start;
  outcome->best_gap_chi2 = summary.best_gap_chi2;
  outcome->runaway_starts = summary.num_runaway_starts;
  outcome->runaway_rss = summary.runaway_rss;
  const std::vector<std::string>& names = problem.model->ParameterNames();
  for (int j : summary.runaway_beyond_box) outcome->runaway_parameters.push_back(names[j]);
  outcome->starts = summary.starts;
  outcome->basins = summary.basins;
  const StartRecord* best = summary.BestStart();
  if (best == nullptr && !summary.starts.empty()) best = &summary.starts.front();
  if (best == nullptr) {
    // Nothing ran (cancelled before the first start): report the seeded start as it is.
    outcome->best.termination = Termination::kCancelled;
    outcome->best.message = summary.message;
    outcome->best.start = prepared.start;
    outcome->best.parameters = prepared.start;
    DescribeEnd(request, problem, prepared.start, outcome);
    outcome->best.initial_cost = outcome->best.final_cost = outcome->statistics.rss;
    return;
  }
  outcome->best = SummaryOf(*best);
  // Report the best basin in its canonical order (peaks sorted by center, ...).
  const Eigen::VectorXd& end =
      !summary.basins.empty() && best->converged ? summary.basins.front().parameters : best->end;
  outcome->best.parameters = end;
  DescribeEnd(request, problem, end, outcome);
}

// Profile-likelihood intervals at the best point when the request asks for them
// (docs/statistics.md): least squares only, since a robust fit's cost is no likelihood that
// the chi-square or F threshold describes, and only at a converged optimum. The refits take
// the request's limits, deadline and cancellation.
void DescribeProfile(const FitRequest& request, const PreparedFit& prepared,
                     const FitHooks& hooks, FitOutcome* outcome) {
  outcome->intervals = request.intervals;
  if (request.intervals != "profile") return;
  ProfileLikelihoodSummary& profile = outcome->profile;
  profile.intervals.assign(outcome->parameter_names.size(), ProfileInterval{});
  if (request.loss != "squared") {
    profile.message = "no profile: the loss is " + request.loss +
                      ", and profile intervals are defined for least squares (loss squared)";
    return;
  }
  if (!outcome->IsConverged()) {
    profile.message = std::string("no profile: the fit did not converge (") +
                      ToString(outcome->best.termination) + ")";
    return;
  }
  ProfileLikelihoodOptions options;
  options.refit = LocalOptions(request, prepared, hooks).lm;
  options.deadline_seconds = request.deadline_seconds;
  std::string options_error;
  if (!options.Validate(&options_error)) {
    profile.message = "no profile: " + options_error;
    return;
  }
  outcome->profile =
      ComputeProfileLikelihood(prepared.problem, outcome->best.parameters, options);
}

}  // namespace

FitOutcome RunPreparedFit(const FitRequest& request, const PreparedFit& prepared) {
  return RunPreparedFit(request, prepared, FitHooks{});
}

FitOutcome RunPreparedFit(const FitRequest& request, const PreparedFit& prepared,
                          const FitHooks& hooks) {
  const auto started = std::chrono::steady_clock::now();
  FitOutcome outcome = DescribeRequest(request, prepared);
  if (request.starts == 1) {
    RunSingleStart(request, prepared, hooks, &outcome);
  } else {
    RunManyStarts(request, prepared, hooks, &outcome);
  }
  DescribeProfile(request, prepared, hooks, &outcome);
  outcome.verdict = JudgeFit(outcome, prepared.problem);
  outcome.elapsed_ms =
      std::chrono::duration<double, std::milli>(std::chrono::steady_clock::now() - started).count();
  return outcome;
}

bool RunFit(const FitRequest& request, FitOutcome* out, std::string* error) {
  return RunFit(request, FitHooks{}, out, error);
}

bool RunFit(const FitRequest& request, const FitHooks& hooks, FitOutcome* out, std::string* error) {
  PreparedFit prepared;
  if (!PrepareFit(request, &prepared, error)) return false;
  *out = RunPreparedFit(request, prepared, hooks);
  return true;
}

}  // namespace foothold
