#include "server/http/web_page.h"

#include <cmath>
#include <cstdio>
#include <sstream>
#include <string>
#include <vector>

#include "server/fit_outcome.h"
#include "server/http/http_helpers.h"
#include "server/job_codec.h"
#include "server/json_codec.h"
#include "server/json_codec_outcome.h"

namespace foothold {
namespace {

// Start log rows beyond this many are counted, not listed (the JSON has them all).
constexpr size_t kMaxStartRows = 500;

const char* kStyle =
    "body{font-family:sans-serif;margin:1.5em;max-width:70em;color:#1d2630}"
    "table{border-collapse:collapse;margin:.5em 0 1.5em}"
    "th,td{padding:.2em .7em;border-bottom:1px solid #d5dbe1;text-align:right}"
    "th:first-child,td:first-child{text-align:left}"
    "code{background:#eef1f4;padding:0 .2em}.flag{color:#8a3b12;font-weight:bold}"
    ".note{color:#56606b;font-size:.9em}img{max-width:100%}";

std::string Number(double value) {
  if (!std::isfinite(value)) return "&ndash;";
  char text[32];
  std::snprintf(text, sizeof(text), "%.6g", value);
  return text;
}

std::string Head(const std::string& title, bool reload) {
  std::string head = "<!doctype html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">";
  if (reload) head += "<meta http-equiv=\"refresh\" content=\"2\">";
  head += "<title>" + HtmlEscape(title) + "</title><style>" + kStyle + "</style></head><body>\n";
  return head;
}

std::string Foot() {
  return "<p class=\"note\">Fits are statistical estimates from the data posted. Where a "
         "result feeds a clinical or safety decision, the validation of the method and the "
         "local rules govern, not this page.</p>\n</body></html>\n";
}

std::string FitLink(const std::string& id) { return "/?fit=" + HtmlEscape(id); }

std::string ModelText(const FitOutcome& outcome) {
  const ModelSpec& model = outcome.model;
  if (!model.IsFamily()) return "<code>" + HtmlEscape(model.expression) + "</code>";
  std::string text = "family <code>" + HtmlEscape(model.family) + "</code>";
  if (model.degree) text += ", degree " + std::to_string(*model.degree);
  if (model.peaks) text += ", " + std::to_string(*model.peaks) + " peaks";
  return text;
}

void WriteVerdict(const FitOutcome& outcome, std::ostream& html) {
  html << "<h2>Verdict</h2>\n<p id=\"verdict\">" << HtmlEscape(outcome.verdict.summary) << "</p>\n";
  if (outcome.verdict.flags.empty()) return;
  html << "<p>Flags:";
  for (const std::string& flag : outcome.verdict.flags) {
    html << " <span class=\"flag\">" << HtmlEscape(flag) << "</span>";
  }
  html << "</p>\n";
}

void WriteBest(const FitOutcome& outcome, std::ostream& html) {
  const FitStatistics& s = outcome.statistics;
  html << "<h2>Best optimum</h2>\n<table id=\"best\"><tr><th>parameter</th><th>value</th>"
          "<th>standard error</th><th>95 % interval</th><th></th></tr>\n";
  for (size_t j = 0; j < outcome.parameter_names.size(); ++j) {
    const Eigen::Index k = static_cast<Eigen::Index>(j);
    std::string note;
    if (j < outcome.is_fixed.size() && outcome.is_fixed[j]) note = "fixed";
    if (j < s.at_bound.size() && s.at_bound[j]) note = "at a bound";
    html << "<tr><td>" << HtmlEscape(outcome.parameter_names[j]) << "</td><td>"
         << Number(outcome.best.parameters[k]) << "</td><td>" << Number(s.standard_errors[k])
         << "</td><td>" << Number(s.ci_low[k]) << " to " << Number(s.ci_high[k]) << "</td><td>"
         << note << "</td></tr>\n";
  }
  html << "</table>\n<p>" << (outcome.IsWeighted() ? "chi-square " : "rss ") << Number(s.rss)
       << ", dof " << s.dof << ", R&sup2; " << Number(s.r2) << ", condition number "
       << Number(s.condition_number) << "; " << ToString(outcome.best.termination) << " after "
       << outcome.best.num_iterations << " iterations.</p>\n";
}

void WriteSearch(const std::string& id, const FitOutcome& outcome, std::ostream& html) {
  html << "<h2>Search</h2>\n<p id=\"search\">" << outcome.starts.size() << " starts run of "
       << outcome.starts_planned << " planned, " << outcome.starts_converged << " converged, "
       << outcome.basins.size() << " basins; stop " << HtmlEscape(outcome.search_stop);
  if (!outcome.search_message.empty()) html << " (" << HtmlEscape(outcome.search_message) << ")";
  html << ".</p>\n";
  if (outcome.runaway_starts > 0) {
    html << "<p>" << outcome.runaway_starts
         << " starts were still descending at a solver limit, down to rss "
         << Number(outcome.runaway_rss) << ".</p>\n";
  }
  const std::string self = "/v1/fits/" + HtmlEscape(id);
  html << "<p><img src=\"" << self << "/plot.svg\" alt=\"data, best fit and residuals\"></p>\n";
  if (outcome.basins.empty()) return;
  html << "<h2>Basins</h2>\n<table id=\"basins\"><tr><th>basin</th><th>rss</th>"
          "<th>gap to the best</th><th>starts</th><th>share</th>";
  for (const std::string& name : outcome.parameter_names)
    html << "<th>" << HtmlEscape(name) << "</th>";
  html << "</tr>\n";
  for (const Basin& basin : outcome.basins) {
    html << "<tr><td>" << basin.id << "</td><td>" << Number(basin.rss) << "</td><td>"
         << Number(basin.delta_rss) << "</td><td>" << basin.num_starts << "</td><td>"
         << Number(100 * basin.share) << " %</td>";
    for (Eigen::Index j = 0; j < basin.parameters.size(); ++j) {
      html << "<td>" << Number(basin.parameters[j]) << "</td>";
    }
    html << "</tr>\n";
  }
  html << "</table>\n<p><img src=\"" << self << "/basins.svg\" alt=\"basins\"></p>\n";
}

void WriteStartLog(const FitOutcome& outcome, std::ostream& html) {
  html << "<h2>Start log</h2>\n<table id=\"starts\"><tr><th>start</th><th>origin</th>"
          "<th>initial rss</th><th>rss</th><th>termination</th><th>iterations</th>"
          "<th>basin</th></tr>\n";
  for (size_t i = 0; i < outcome.starts.size() && i < kMaxStartRows; ++i) {
    const StartRecord& record = outcome.starts[i];
    html << "<tr><td>" << record.index << "</td><td>" << HtmlEscape(record.origin) << "</td><td>"
         << Number(record.initial_rss) << "</td><td>" << Number(record.rss) << "</td><td>"
         << ToString(record.termination) << "</td><td>" << record.num_iterations << "</td><td>"
         << (record.basin >= 0 ? std::to_string(record.basin) : "&ndash;") << "</td></tr>\n";
  }
  html << "</table>\n";
  if (outcome.starts.size() > kMaxStartRows) {
    html << "<p>" << outcome.starts.size() - kMaxStartRows
         << " more starts are in the JSON start log.</p>\n";
  }
}

}  // namespace

std::string RenderJobsPage(const JobPage& page) {
  std::ostringstream html;
  html << Head("foothold", false) << "<h1>foothold</h1>\n<p>Recent fits, newest first. API: "
       << "<a href=\"/v1/fits\">/v1/fits</a>, <a href=\"/v1/families\">/v1/families</a>.</p>\n"
       << "<table id=\"jobs\"><tr><th>fit</th><th>label</th><th>state</th><th>created</th>"
          "<th>plot</th></tr>\n";
  for (const JobRecord& job : page.jobs) {
    html << "<tr><td><a href=\"" << FitLink(job.id) << "\">" << HtmlEscape(job.id)
         << "</a></td><td>" << HtmlEscape(job.label) << "</td><td>" << ToString(job.state)
         << "</td><td>" << FormatRfc3339(job.created_ms) << "</td><td>";
    if (job.state == JobState::kDone) {
      html << "<a href=\"/v1/fits/" << HtmlEscape(job.id) << "/plot.svg\">plot</a>";
    }
    html << "</td></tr>\n";
  }
  html << "</table>\n" << Foot();
  return html.str();
}

std::string RenderFitPage(const JobRecord& job) {
  const std::string title = job.label.empty() ? "fit " + job.id : job.label;
  std::ostringstream html;
  html << Head(title + " - foothold", !IsFinished(job.state))
       << "<p><a href=\"/\">all fits</a></p>\n"
       << "<h1>" << HtmlEscape(title) << "</h1>\n<p id=\"state\">fit <code>" << HtmlEscape(job.id)
       << "</code>: " << ToString(job.state) << ", created " << FormatRfc3339(job.created_ms)
       << ". JSON: <a href=\"/v1/fits/" << HtmlEscape(job.id) << "\">/v1/fits/"
       << HtmlEscape(job.id) << "</a>.</p>\n";
  if (!IsFinished(job.state)) {
    html << "<p id=\"progress\">" << job.progress.starts_finished << " of "
         << job.progress.starts_planned << " starts finished";
    if (job.progress.starts_finished > 0)
      html << ", best rss so far " << Number(job.progress.best_rss);
    html << ". This page reloads every two seconds.</p>\n" << Foot();
    return html.str();
  }
  if (job.state != JobState::kDone) {
    if (!job.error.empty()) html << "<p id=\"error\">" << HtmlEscape(job.error) << "</p>\n";
    html << Foot();
    return html.str();
  }
  FitOutcome outcome;
  std::string error;
  Json document = Json::parse(job.result_json, nullptr, false);
  if (document.is_discarded() || !DecodeFitOutcome(document, &outcome, &error)) {
    html << "<p id=\"error\">the stored result could not be read: " << HtmlEscape(error) << "</p>\n"
         << Foot();
    return html.str();
  }
  html << "<p>Model: " << ModelText(outcome) << ", response <code>" << HtmlEscape(outcome.response)
       << "</code>, " << outcome.statistics.num_points << " points, seed " << outcome.seed
       << ".</p>\n";
  WriteVerdict(outcome, html);
  WriteBest(outcome, html);
  WriteSearch(job.id, outcome, html);
  WriteStartLog(outcome, html);
  html << Foot();
  return html.str();
}

}  // namespace foothold
