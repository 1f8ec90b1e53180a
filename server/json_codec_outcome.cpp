#include "server/json_codec_outcome.h"

#include <limits>

namespace foothold {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

// The encoder writes non-finite numbers as null.
double NumberOr(const Json& object, const char* key, double fallback = kNaN) {
  if (!object.is_object() || !object.contains(key)) return fallback;
  const Json& value = object[key];
  return value.is_number() ? value.get<double>() : kNaN;
}

int IntOr(const Json& object, const char* key, int fallback = 0) {
  if (!object.is_object() || !object.contains(key) || !object[key].is_number()) return fallback;
  return object[key].get<int>();
}

std::string StringOr(const Json& object, const char* key, const std::string& fallback = "") {
  if (!object.is_object() || !object.contains(key) || !object[key].is_string()) return fallback;
  return object[key].get<std::string>();
}

std::vector<std::string> Strings(const Json& object, const char* key) {
  std::vector<std::string> items;
  if (!object.is_object() || !object.contains(key) || !object[key].is_array()) return items;
  for (const Json& item : object[key]) {
    if (item.is_string()) items.push_back(item.get<std::string>());
  }
  return items;
}

bool Need(const Json& object, const char* key, const std::string& where, bool (Json::*is)() const,
          const char* expected, std::string* error) {
  if (object.contains(key) && (object[key].*is)()) return true;
  *error = where + "." + key + ": expected " + expected;
  return false;
}

Termination TerminationOr(const std::string& text) {
  Termination termination = Termination::kIterationLimit;
  TerminationFromString(text, &termination);
  return termination;
}

bool DecodeModel(const Json& model, FitOutcome* out, std::string* error) {
  out->model.family = StringOr(model, "family");
  out->model.expression = StringOr(model, "expression");
  if (model.contains("degree") && model["degree"].is_number()) {
    out->model.degree = model["degree"].get<int>();
  }
  if (model.contains("peaks") && model["peaks"].is_number()) {
    out->model.peaks = model["peaks"].get<int>();
  }
  out->model.auto_peaks =
      model.value("auto_peaks", false) || (model.contains("peaks") && model["peaks"] == "auto");
  if (!Need(model, "parameters", "result.model", &Json::is_array, "an array of names", error)) {
    return false;
  }
  out->parameter_names = Strings(model, "parameters");
  out->model.parameters = out->parameter_names;
  return true;
}

bool DecodeBest(const Json& best, FitOutcome* out, std::string* error) {
  if (!Need(best, "parameters", "result.best", &Json::is_object, "an object", error)) return false;
  const size_t p = out->parameter_names.size();
  FitStatistics& stats = out->statistics;
  out->best.parameters = Eigen::VectorXd::Constant(p, kNaN);
  stats.standard_errors = Eigen::VectorXd::Constant(p, kNaN);
  stats.ci_low = Eigen::VectorXd::Constant(p, kNaN);
  stats.ci_high = Eigen::VectorXd::Constant(p, kNaN);
  stats.at_bound.assign(p, false);
  out->is_fixed.assign(p, false);
  for (size_t j = 0; j < p; ++j) {
    const std::string& name = out->parameter_names[j];
    if (!best["parameters"].contains(name)) {
      *error = "result.best.parameters: no entry for parameter '" + name + "'";
      return false;
    }
    const Json& entry = best["parameters"][name];
    out->best.parameters[j] = NumberOr(entry, "value");
    stats.standard_errors[j] = NumberOr(entry, "stderr");
    stats.ci_low[j] = NumberOr(entry, "ci_low");
    stats.ci_high[j] = NumberOr(entry, "ci_high");
    stats.at_bound[j] = entry.value("at_bound", false);
    out->is_fixed[j] = entry.value("fixed", false);
  }
  stats.num_points = IntOr(best, "num_points");
  stats.num_free = IntOr(best, "num_free");
  stats.dof = IntOr(best, "dof");
  stats.rss = NumberOr(best, "rss");
  stats.reduced_chi2 = NumberOr(best, "reduced_chi2");
  stats.r2 = NumberOr(best, "r2");
  stats.rmse = NumberOr(best, "rmse");
  stats.aic = NumberOr(best, "aic");
  stats.aicc = NumberOr(best, "aicc");
  stats.bic = NumberOr(best, "bic");
  stats.durbin_watson = NumberOr(best, "durbin_watson");
  stats.condition_number = NumberOr(best, "condition_number");
  if (best.contains("runs")) {
    stats.num_runs = IntOr(best["runs"], "count");
    stats.runs_z = NumberOr(best["runs"], "z");
    stats.runs_p_value = NumberOr(best["runs"], "p_value");
  }
  out->best.termination = TerminationOr(StringOr(best, "termination"));
  out->best.message = StringOr(best, "message");
  out->best.num_iterations = IntOr(best, "iterations");
  out->best.num_evaluations = IntOr(best, "evaluations");
  out->best.initial_cost = NumberOr(best, "initial_rss");
  out->loss = StringOr(best, "loss", "squared");
  out->method = StringOr(best, "method", "lm");
  return true;
}

Eigen::VectorXd ValuesOf(const Json& parameters, const std::vector<std::string>& names,
                         const char* key) {
  Eigen::VectorXd values = Eigen::VectorXd::Constant(names.size(), kNaN);
  for (size_t j = 0; j < names.size(); ++j) {
    if (!parameters.is_object() || !parameters.contains(names[j])) continue;
    const Json& entry = parameters[names[j]];
    values[j] = key ? NumberOr(entry, key) : (entry.is_number() ? entry.get<double>() : kNaN);
  }
  return values;
}

void DecodeSearch(const Json& document, FitOutcome* out) {
  for (const Json& entry : document.value("basins", Json::array())) {
    Basin basin;
    basin.id = IntOr(entry, "id");
    basin.rss = NumberOr(entry, "rss");
    basin.delta_rss = NumberOr(entry, "delta_rss");
    basin.num_starts = IntOr(entry, "starts");
    basin.share = NumberOr(entry, "share");
    const Json parameters = entry.value("parameters", Json::object());
    basin.parameters = ValuesOf(parameters, out->parameter_names, "value");
    basin.standard_errors = ValuesOf(parameters, out->parameter_names, "stderr");
    basin.has_standard_errors = true;
    out->basins.push_back(std::move(basin));
  }
  for (const Json& entry : document.value("starts", Json::array())) {
    StartRecord record;
    record.index = IntOr(entry, "index");
    record.origin = StringOr(entry, "origin");
    record.start = ValuesOf(entry.value("start", Json::object()), out->parameter_names, nullptr);
    record.end = ValuesOf(entry.value("end", Json::object()), out->parameter_names, nullptr);
    record.rss = NumberOr(entry, "rss");
    record.initial_rss = NumberOr(entry, "initial_rss");
    record.termination = TerminationOr(StringOr(entry, "termination"));
    record.message = StringOr(entry, "message");
    record.num_iterations = IntOr(entry, "iterations");
    record.num_evaluations = IntOr(entry, "evaluations");
    record.converged = entry.value("converged", false);
    record.basin = IntOr(entry, "basin", -1);
    out->starts.push_back(std::move(record));
  }
  const Json search = document.value("search", Json::object());
  out->search_stop = StringOr(search, "stop", "budget");
  out->search_message = StringOr(search, "message");
  out->starts_planned = IntOr(search, "starts_planned", static_cast<int>(out->starts.size()));
  out->starts_converged = IntOr(search, "starts_converged");
  out->runaway_starts = IntOr(search, "runaway_starts");
  out->runaway_rss = NumberOr(search, "runaway_rss");
  out->runaway_parameters = Strings(search, "runaway_parameters");
}

bool DecodeOutcome(const Json& document, FitOutcome* out, std::string* error) {
  if (!document.is_object()) {
    *error = "result: expected an object";
    return false;
  }
  FitOutcome outcome;
  if (!Need(document, "model", "result", &Json::is_object, "an object", error) ||
      !Need(document, "best", "result", &Json::is_object, "an object", error) ||
      !DecodeModel(document["model"], &outcome, error) ||
      !DecodeBest(document["best"], &outcome, error)) {
    return false;
  }
  outcome.label = StringOr(document, "label");
  outcome.response = StringOr(document, "response", "y");
  outcome.predictor_names = Strings(document, "predictors");
  outcome.sigma_column = StringOr(document, "sigma_column");
  SigmaModeFromString(StringOr(document, "sigma_mode", "absolute"), &outcome.sigma_mode);
  DecodeSearch(document, &outcome);
  const Json verdict = document.value("verdict", Json::object());
  outcome.verdict.flags = Strings(verdict, "flags");
  outcome.verdict.summary = StringOr(verdict, "summary");
  outcome.guessed = Strings(document, "guessed");
  outcome.warnings = Strings(document, "warnings");
  if (document.contains("seed") && document["seed"].is_number_unsigned()) {
    outcome.seed = document["seed"].get<std::uint64_t>();
  }
  outcome.elapsed_ms = NumberOr(document, "elapsed_ms", 0);
  if (document.contains("outliers") && document["outliers"].contains("indices")) {
    for (const Json& index : document["outliers"]["indices"]) {
      if (index.is_number_integer()) outcome.outliers.push_back(index.get<int>());
    }
  }
  *out = std::move(outcome);
  return true;
}

}  // namespace

bool DecodeFitOutcome(const Json& document, FitOutcome* out, std::string* error) {
  // A key of an unexpected type (a document from another version) is an error, not an abort.
  try {
    return DecodeOutcome(document, out, error);
  } catch (const Json::exception& exception) {
    *error = std::string("result: ") + exception.what();
    return false;
  }
}

}  // namespace foothold
