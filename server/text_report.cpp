#include "server/text_report.h"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <vector>

#include "heuristics/families/catalogue.h"

namespace foothold {
namespace {

// Values carry six significant digits, errors three: an error is rarely known better.
constexpr int kValueDigits = 6;
constexpr int kErrorDigits = 3;

std::string Join(const std::vector<std::string>& names) {
  std::string joined;
  for (const std::string& name : names) {
    if (!joined.empty()) joined += ", ";
    joined += name;
  }
  return joined;
}

// Writes rows of cells with each column padded to its widest cell.
void WriteAligned(const std::vector<std::vector<std::string>>& rows, std::ostream& out) {
  std::vector<size_t> widths;
  for (const auto& row : rows) {
    if (widths.size() < row.size()) widths.resize(row.size(), 0);
    for (size_t c = 0; c < row.size(); ++c) widths[c] = std::max(widths[c], row[c].size());
  }
  for (const auto& row : rows) {
    std::string line;
    for (size_t c = 0; c < row.size(); ++c) {
      line += row[c];
      if (c + 1 < row.size()) line += std::string(widths[c] - row[c].size() + 2, ' ');
    }
    while (!line.empty() && line.back() == ' ') line.pop_back();
    out << line << '\n';
  }
}

std::string ModelLine(const FitOutcome& outcome) {
  const ModelSpec& model = outcome.model;
  if (!model.IsFamily()) return model.expression;
  std::string line = model.family;
  if (model.degree) line += " (degree " + std::to_string(*model.degree) + ")";
  if (model.peaks) line += " (" + std::to_string(*model.peaks) + " peaks)";
  return line;
}

std::string DataLine(const FitOutcome& outcome, const std::string& source) {
  std::string line = source + ": " + std::to_string(outcome.statistics.num_points) +
                     " points, response " + outcome.response + ", ";
  if (outcome.IsWeighted()) {
    line +=
        "sigma from column '" + outcome.sigma_column + "' (" + ToString(outcome.sigma_mode) + ")";
  } else {
    line += "unweighted";
  }
  return line;
}

double At(const Eigen::VectorXd& values, size_t j) {
  return j < static_cast<size_t>(values.size()) ? values[j] : std::nan("");
}

// One end of a profile interval: its value, or why it is open.
std::string ProfileEndText(double value, ProfileEnd end) {
  if (end == ProfileEnd::kCrossed) return FormatSignificant(value, kValueDigits);
  return std::string("open (") + ToString(end) + ")";
}

// The profile column of parameter j; empty when profiles were not asked for.
std::string ProfileCell(const FitOutcome& outcome, size_t j) {
  const ProfileLikelihoodSummary& profile = outcome.profile;
  if (!profile.is_computed || j >= profile.intervals.size()) return "n/a";
  const ProfileInterval& interval = profile.intervals[j];
  return "[" + ProfileEndText(interval.lower, interval.lower_end) + ", " +
         ProfileEndText(interval.upper, interval.upper_end) + "]";
}

void WriteParameterTable(const FitOutcome& outcome, std::ostream& out) {
  const FitStatistics& stats = outcome.statistics;
  const bool has_profile = outcome.HasProfile();
  std::vector<std::vector<std::string>> rows;
  rows.push_back({"parameter", "value", "std. error", "95% interval"});
  if (has_profile) rows.back().push_back("95% profile interval");
  rows.back().push_back("");
  for (size_t j = 0; j < outcome.parameter_names.size(); ++j) {
    const bool fixed = j < outcome.is_fixed.size() && outcome.is_fixed[j];
    const bool at_bound = j < stats.at_bound.size() && stats.at_bound[j];
    std::vector<std::string> row{outcome.parameter_names[j],
                                 FormatSignificant(At(outcome.best.parameters, j), kValueDigits)};
    if (fixed) {
      row.push_back("fixed");
      row.push_back("");
      if (has_profile) row.push_back("");
    } else {
      row.push_back(FormatSignificant(At(stats.standard_errors, j), kErrorDigits));
      row.push_back("[" + FormatSignificant(At(stats.ci_low, j), kValueDigits) + ", " +
                    FormatSignificant(At(stats.ci_high, j), kValueDigits) + "]");
      if (has_profile) row.push_back(ProfileCell(outcome, j));
    }
    row.push_back(at_bound && !fixed ? "at bound" : "");
    rows.push_back(std::move(row));
  }
  WriteAligned(rows, out);
}

void WriteStatistics(const FitOutcome& outcome, std::ostream& out) {
  const FitStatistics& stats = outcome.statistics;
  const LocalFitSummary& best = outcome.best;
  auto value = [](double v) { return FormatSignificant(v, kValueDigits); };
  std::vector<std::vector<std::string>> rows{
      {"points", std::to_string(stats.num_points)},
      {"free parameters", std::to_string(stats.num_free)},
      {"degrees of freedom", std::to_string(stats.dof)},
      {outcome.IsWeighted() ? "chi-square" : "rss", value(stats.rss)},
      {"reduced chi-square", value(stats.reduced_chi2)},
      {"R^2", value(stats.r2)},
      {"RMSE", value(stats.rmse)},
      {"AIC", value(stats.aic)},
      {"AICc", value(stats.aicc)},
      {"BIC", value(stats.bic)},
      {"Durbin-Watson", value(stats.durbin_watson)},
      {"runs test p", FormatSignificant(stats.runs_p_value, kErrorDigits) + " (" +
                          std::to_string(stats.num_runs) + " runs)"},
      {"condition number", FormatSignificant(stats.condition_number, kErrorDigits)},
      {"termination",
       std::string(ToString(best.termination)) + (best.message.empty() ? "" : ": " + best.message)},
      {"iterations", std::to_string(best.num_iterations) + " (" +
                         std::to_string(best.num_evaluations) + " evaluations)"},
  };
  WriteAligned(rows, out);
}

// Basins beyond this many are counted, not listed: the worst ones are rarely informative.
constexpr int kMaxBasinRows = 8;

// The search: how many starts ran, why it stopped, and every basin with its parameters.
void WriteSearch(const FitOutcome& outcome, std::ostream& out) {
  out << "search: " << outcome.starts.size() << " starts run of " << outcome.starts_planned
      << " planned, " << outcome.starts_converged << " converged, " << outcome.basins.size()
      << (outcome.basins.size() == 1 ? " basin" : " basins") << "; stop: " << outcome.search_stop;
  if (!outcome.search_message.empty()) out << " (" << outcome.search_message << ")";
  out << '\n';
  if (outcome.runaway_starts > 0) {
    out << "runaway: " << outcome.runaway_starts
        << (outcome.runaway_starts == 1 ? " start" : " starts")
        << " still descending at a solver limit, down to rss " << outcome.runaway_rss;
    for (size_t k = 0; k < outcome.runaway_parameters.size(); ++k) {
      out << (k == 0 ? "; beyond the search box: " : ", ") << outcome.runaway_parameters[k];
    }
    out << '\n';
  }
  if (outcome.basins.empty()) return;
  std::vector<std::vector<std::string>> rows;
  std::vector<std::string> header{"basin", outcome.IsWeighted() ? "chi-square" : "rss", "delta",
                                  "starts"};
  for (const std::string& name : outcome.parameter_names) header.push_back(name);
  rows.push_back(header);
  for (const Basin& basin : outcome.basins) {
    if (basin.id >= kMaxBasinRows) break;
    std::vector<std::string> row{
        std::to_string(basin.id), FormatSignificant(basin.rss, kValueDigits),
        FormatSignificant(basin.delta_rss, kErrorDigits), std::to_string(basin.num_starts)};
    for (Eigen::Index j = 0; j < basin.parameters.size(); ++j) {
      row.push_back(FormatSignificant(basin.parameters[j], kValueDigits));
    }
    rows.push_back(std::move(row));
  }
  WriteAligned(rows, out);
  if (static_cast<int>(outcome.basins.size()) > kMaxBasinRows) {
    out << "... and " << outcome.basins.size() - kMaxBasinRows << " more basins (all in --json)\n";
  }
}

}  // namespace

std::string FormatSignificant(double value, int digits) {
  if (!std::isfinite(value)) return "n/a";
  char buffer[48];
  std::snprintf(buffer, sizeof(buffer), "%.*g", digits, value);
  return buffer;
}

void WriteFitReport(const FitOutcome& outcome, const std::string& source, std::ostream& out) {
  std::vector<std::vector<std::string>> header{{"model", ModelLine(outcome)},
                                               {"data", DataLine(outcome, source)}};
  if (!outcome.label.empty()) header.insert(header.begin(), {"label", outcome.label});
  if (!outcome.guessed.empty()) {
    const std::string origin = outcome.starts.empty() ? "guess" : outcome.starts[0].origin;
    header.push_back(
        {"start", "guessed from the data (" + origin + ") for " + Join(outcome.guessed)});
  }
  for (const std::string& warning : outcome.warnings) header.push_back({"note", warning});
  WriteAligned(header, out);
  out << '\n';
  WriteParameterTable(outcome, out);
  if (outcome.HasProfile()) {
    const ProfileLikelihoodSummary& profile = outcome.profile;
    out << (profile.is_computed ? profile.BriefReport() : profile.message) << '\n';
  }
  out << '\n';
  WriteStatistics(outcome, out);
  out << '\n';
  WriteSearch(outcome, out);
  out << '\n';
  out << "verdict: " << outcome.verdict.summary;
  if (!outcome.verdict.flags.empty()) out << " [" << Join(outcome.verdict.flags) << "]";
  out << '\n';
}

void WriteFamiliesTable(std::ostream& out) {
  std::vector<std::vector<std::string>> rows{{"family", "parameters", "formula"}};
  for (const FamilyDescription& family : FamilyCatalogue()) {
    std::vector<std::string> names;
    for (const FamilyParameter& parameter : family.parameters) names.push_back(parameter.name);
    std::string name = family.name;
    if (!family.options.empty()) name += " [" + Join(family.options) + "]";
    rows.push_back({name, Join(names), family.formula});
  }
  WriteAligned(rows, out);
}

}  // namespace foothold
