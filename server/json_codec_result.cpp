// Result side of the codec: FitOutcome, the catalogue and stored requests to documents.
#include <cmath>
#include <limits>

#include "heuristics/families/catalogue.h"
#include "server/json_codec.h"

namespace foothold {
namespace {

// JSON has no NaN or infinity; a number that is not finite is reported as null.
Json Number(double value) { return std::isfinite(value) ? Json(value) : Json(nullptr); }

Json ValuesByName(const std::vector<std::string>& names, const Eigen::VectorXd& values) {
  Json object = Json::object();
  for (size_t j = 0; j < names.size(); ++j) {
    object[names[j]] = j < static_cast<size_t>(values.size()) ? Number(values[j]) : Json(nullptr);
  }
  return object;
}

Json Matrix(const Eigen::MatrixXd& matrix) {
  Json rows = Json::array();
  for (Eigen::Index i = 0; i < matrix.rows(); ++i) {
    Json row = Json::array();
    for (Eigen::Index j = 0; j < matrix.cols(); ++j) row.push_back(Number(matrix(i, j)));
    rows.push_back(std::move(row));
  }
  return rows;
}

Json EncodeModel(const ModelSpec& model, const std::vector<std::string>& parameter_names) {
  Json object = Json::object();
  if (model.IsFamily()) {
    object["family"] = model.family;
    if (model.degree) object["degree"] = *model.degree;
    if (model.peaks) {
      object["peaks"] = *model.peaks;
      // The count was chosen from the data when the request said "auto".
      if (model.auto_peaks) object["auto_peaks"] = true;
    } else if (model.auto_peaks) {
      object["peaks"] = "auto";
    }
  } else {
    object["expression"] = model.expression;
  }
  object["parameters"] = parameter_names;
  return object;
}

double At(const Eigen::VectorXd& values, size_t j) {
  return j < static_cast<size_t>(values.size()) ? values[j]
                                                : std::numeric_limits<double>::quiet_NaN();
}

// The profile interval of parameter j beside its Wald interval: [low, high] with null for
// an open end, and how each end was settled; both null unless profile intervals were asked
// for and computed (docs/result-document.md).
void AddProfileInterval(const FitOutcome& outcome, size_t j, Json* entry) {
  const ProfileLikelihoodSummary& profile = outcome.profile;
  if (!outcome.HasProfile() || !profile.is_computed || j >= profile.intervals.size()) {
    (*entry)["profile_interval"] = nullptr;
    (*entry)["profile_status"] = nullptr;
    return;
  }
  const ProfileInterval& interval = profile.intervals[j];
  (*entry)["profile_interval"] = interval.is_profiled
                                     ? Json::array({Number(interval.lower), Number(interval.upper)})
                                     : Json(nullptr);
  (*entry)["profile_status"] = {{"lower", ToString(interval.lower_end)},
                                {"upper", ToString(interval.upper_end)},
                                {"refits", interval.num_refits},
                                {"message", interval.message}};
}

// The profile's threshold and counts; null unless profile intervals were asked for.
Json EncodeProfile(const FitOutcome& outcome) {
  if (!outcome.HasProfile()) return nullptr;
  const ProfileLikelihoodSummary& profile = outcome.profile;
  Json object = Json::object();
  object["computed"] = profile.is_computed;
  object["message"] = profile.is_computed ? profile.BriefReport() : profile.message;
  if (!profile.is_computed) return object;
  object["rule"] = ToString(profile.rule);
  object["confidence_level"] = Number(profile.confidence_level);
  object["threshold_rss"] = Number(profile.threshold_cost);
  object["delta_rss"] = Number(profile.cost_increase);
  object["refits"] = profile.num_refits;
  object["seconds"] = Number(profile.total_seconds);
  object["lower_rss_found"] =
      profile.found_lower_cost ? Number(profile.lowest_cost) : Json(nullptr);
  return object;
}

Json EncodeBest(const FitOutcome& outcome) {
  const FitStatistics& stats = outcome.statistics;
  const LocalFitSummary& best = outcome.best;
  const std::vector<std::string>& names = outcome.parameter_names;
  Json parameters = Json::object();
  for (size_t j = 0; j < names.size(); ++j) {
    Json entry = Json::object();
    entry["value"] = Number(At(best.parameters, j));
    entry["stderr"] = Number(At(stats.standard_errors, j));
    entry["ci_low"] = Number(At(stats.ci_low, j));
    entry["ci_high"] = Number(At(stats.ci_high, j));
    entry["at_bound"] = j < stats.at_bound.size() && stats.at_bound[j];
    entry["fixed"] = j < outcome.is_fixed.size() && outcome.is_fixed[j];
    AddProfileInterval(outcome, j, &entry);
    parameters[names[j]] = std::move(entry);
  }
  Json unidentifiable = Json::array();
  for (int j : stats.unidentifiable) unidentifiable.push_back(names[j]);

  Json object = Json::object();
  object["parameters"] = std::move(parameters);
  object["rss"] = Number(stats.rss);
  object["dof"] = stats.dof;
  object["reduced_chi2"] = Number(stats.reduced_chi2);
  object["r2"] = Number(stats.r2);
  object["aic"] = Number(stats.aic);
  object["bic"] = Number(stats.bic);
  object["termination"] = ToString(best.termination);
  object["iterations"] = best.num_iterations;
  object["evaluations"] = best.num_evaluations;
  object["converged"] = best.IsConverged();
  object["message"] = best.message;
  object["num_points"] = stats.num_points;
  object["num_free"] = stats.num_free;
  object["initial_rss"] = Number(best.initial_cost);
  object["jacobian_evaluations"] = best.num_jacobian_evaluations;
  object["aicc"] = Number(stats.aicc);
  object["rmse"] = Number(stats.rmse);
  object["durbin_watson"] = Number(stats.durbin_watson);
  object["runs"] = {{"count", stats.num_runs},
                    {"z", Number(stats.runs_z)},
                    {"p_value", Number(stats.runs_p_value)}};
  object["condition_number"] = Number(stats.condition_number);
  object["rank"] = stats.rank;
  object["rank_deficient"] = stats.is_rank_deficient;
  object["unidentifiable"] = std::move(unidentifiable);
  object["loss"] = outcome.loss;
  object["loss_scale"] = outcome.loss == "squared" ? Json(nullptr) : Number(outcome.loss_scale);
  object["loss_scale_automatic"] = outcome.is_loss_scale_automatic;
  object["method"] = outcome.method;
  object["covariance_scale"] = Number(stats.covariance_scale);
  object["t_quantile"] = Number(stats.t_quantile);
  object["intervals"] = outcome.intervals;
  object["profile"] = EncodeProfile(outcome);
  object["correlation"] = Matrix(stats.correlation);
  object["covariance"] = Matrix(stats.covariance);
  object["seconds"] = Number(best.total_seconds);
  return object;
}

Json EncodeBasins(const FitOutcome& outcome) {
  Json basins = Json::array();
  for (const Basin& basin : outcome.basins) {
    Json parameters = Json::object();
    for (size_t j = 0; j < outcome.parameter_names.size(); ++j) {
      const double stderr_value = basin.has_standard_errors
                                      ? At(basin.standard_errors, j)
                                      : std::numeric_limits<double>::quiet_NaN();
      parameters[outcome.parameter_names[j]] = {{"value", Number(At(basin.parameters, j))},
                                                {"stderr", Number(stderr_value)}};
    }
    basins.push_back({{"id", basin.id},
                      {"rss", Number(basin.rss)},
                      {"delta_rss", Number(basin.delta_rss)},
                      {"starts", basin.num_starts},
                      {"share", Number(basin.share)},
                      {"parameters", std::move(parameters)}});
  }
  return basins;
}

Json EncodeStarts(const FitOutcome& outcome) {
  Json starts = Json::array();
  for (const StartRecord& record : outcome.starts) {
    Json entry = Json::object();
    entry["index"] = record.index;
    entry["origin"] = record.origin;
    entry["start"] = ValuesByName(outcome.parameter_names, record.start);
    entry["end"] = ValuesByName(outcome.parameter_names, record.end);
    entry["rss"] = Number(record.rss);
    entry["initial_rss"] = Number(record.initial_rss);
    entry["termination"] = ToString(record.termination);
    entry["message"] = record.message;
    entry["iterations"] = record.num_iterations;
    entry["evaluations"] = record.num_evaluations;
    entry["converged"] = record.converged;
    entry["basin"] = record.basin >= 0 ? Json(record.basin) : Json(nullptr);
    entry["seconds"] = Number(record.seconds);
    starts.push_back(std::move(entry));
  }
  return starts;
}

}  // namespace

Json EncodeFitOutcome(const FitOutcome& outcome) {
  Json document = Json::object();
  if (!outcome.label.empty()) document["label"] = outcome.label;
  document["model"] = EncodeModel(outcome.model, outcome.parameter_names);
  document["response"] = outcome.response;
  document["predictors"] = outcome.predictor_names;
  document["sigma_column"] = outcome.IsWeighted() ? Json(outcome.sigma_column) : Json(nullptr);
  document["sigma_mode"] =
      outcome.IsWeighted() ? Json(ToString(outcome.sigma_mode)) : Json(nullptr);
  document["best"] = EncodeBest(outcome);
  document["outliers"] = {
      {"count", outcome.outliers.size()},
      {"indices", outcome.outliers},
      {"cut", outcome.loss == "squared" ? Json(nullptr) : Number(outcome.outlier_cut)}};
  document["basins"] = EncodeBasins(outcome);
  document["starts"] = EncodeStarts(outcome);
  document["search"] = {{"stop", outcome.search_stop},
                        {"message", outcome.search_message},
                        {"starts_planned", outcome.starts_planned},
                        {"starts_run", outcome.starts.size()},
                        {"starts_converged", outcome.starts_converged},
                        {"basins", outcome.basins.size()},
                        {"runaway_starts", outcome.runaway_starts},
                        {"runaway_rss", Number(outcome.runaway_rss)},
                        {"runaway_parameters", outcome.runaway_parameters}};
  document["verdict"] = {{"flags", outcome.verdict.flags}, {"summary", outcome.verdict.summary}};
  document["guessed"] = outcome.guessed;
  document["warnings"] = outcome.warnings;
  document["seed"] = outcome.seed;
  document["elapsed_ms"] = Number(outcome.elapsed_ms);
  return document;
}

Json EncodeFamilies() {
  Json families = Json::array();
  for (const FamilyDescription& family : FamilyCatalogue()) {
    Json parameters = Json::array();
    for (const FamilyParameter& parameter : family.parameters) {
      parameters.push_back({{"name", parameter.name},
                            {"meaning", parameter.meaning},
                            {"default_lower", Number(parameter.default_lower)},
                            {"default_upper", Number(parameter.default_upper)}});
    }
    families.push_back({{"name", family.name},
                        {"formula", family.formula},
                        {"summary", family.summary},
                        {"options", family.options},
                        {"guess_method", family.guess_method},
                        {"parameters", std::move(parameters)}});
  }
  return {{"families", std::move(families)}};
}

Json EncodeFitRequest(const FitRequest& request) {
  Json document = Json::object();
  if (!request.label.empty()) document["label"] = request.label;
  Json model = EncodeModel(request.model, request.model.parameters);
  if (request.model.IsFamily()) model.erase("parameters");
  document["model"] = std::move(model);
  Json data = Json::object();
  for (int j = 0; j < request.data.NumColumns(); ++j) {
    data[request.data.ColumnNames()[j]] = request.data.Column(j);
  }
  document["data"] = std::move(data);
  document["response"] = request.response;
  if (!request.sigma_column.empty()) document["sigma_column"] = request.sigma_column;
  Json start = Json::object();
  for (const NamedValue& entry : request.start) start[entry.name] = entry.value;
  Json fix = Json::object();
  for (const NamedValue& entry : request.fix) fix[entry.name] = entry.value;
  Json bounds = Json::object();
  for (const NamedBounds& entry : request.bounds) {
    bounds[entry.name] = {Number(entry.lower), Number(entry.upper)};
  }
  document["start"] = std::move(start);
  document["fix"] = std::move(fix);
  document["bounds"] = std::move(bounds);
  if (!request.sigma_mode.empty()) document["sigma_mode"] = request.sigma_mode;
  document["loss"] = request.loss;
  document["loss_scale"] = request.loss_scale;
  document["method"] = request.method;
  // 0 means "automatic" for both and is written by leaving the key out.
  if (request.starts > 0) document["starts"] = request.starts;
  document["seed"] = request.seed;
  if (request.threads > 0) document["threads"] = request.threads;
  document["deadline_seconds"] = Number(request.deadline_seconds);
  document["max_iterations"] = request.max_iterations;
  document["max_evaluations"] = request.max_evaluations;
  document["intervals"] = request.intervals;
  if (!request.compare.empty()) {
    Json compare = Json::array();
    for (const ModelSpec& spec : request.compare) {
      Json entry = EncodeModel(spec, spec.parameters);
      entry.erase("parameters");
      compare.push_back(std::move(entry));
    }
    document["compare"] = std::move(compare);
  }
  return document;
}

}  // namespace foothold
