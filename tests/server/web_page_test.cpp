// The web page's HTML for each job state, without a network: a running fit reloads and
// shows its progress, a failed one its error, a done one every start, basin and parameter
// of its result document, and text from the request is always escaped.
#include "server/http/web_page.h"

#include <catch2/catch.hpp>
#include <string>

#include "server/fit_service.h"
#include "server/json_codec.h"

namespace foothold {
namespace {

int Count(const std::string& text, const std::string& part) {
  int count = 0;
  for (size_t at = text.find(part); at != std::string::npos; at = text.find(part, at + 1)) ++count;
  return count;
}

JobRecord Job(JobState state) {
  JobRecord job;
  job.id = "f00d";
  job.label = "plate 3 <A&B>";
  job.state = state;
  job.created_ms = 1764633600000;
  return job;
}

TEST_CASE("Web page: a running fit shows its progress and reloads itself", "[server]") {
  JobRecord job = Job(JobState::kRunning);
  job.progress = {12, 40, 0.25};
  const std::string html = RenderFitPage(job);
  CHECK(html.find("<meta http-equiv=\"refresh\" content=\"2\">") != std::string::npos);
  CHECK(html.find("12 of 40 starts finished, best rss so far 0.25") != std::string::npos);
  CHECK(html.find("plate 3 &lt;A&amp;B&gt;") != std::string::npos);
  CHECK(html.find("<A&B>") == std::string::npos);
}

TEST_CASE("Web page: a failed fit shows its error, escaped, and does not reload", "[server]") {
  JobRecord job = Job(JobState::kFailed);
  job.error = "data.y[3]: expected a finite number, got <NaN>";
  const std::string html = RenderFitPage(job);
  CHECK(html.find("refresh") == std::string::npos);
  CHECK(html.find("got &lt;NaN&gt;") != std::string::npos);
}

TEST_CASE("Web page: a done fit lists every parameter, basin and start of its result", "[server]") {
  FitRequest request;
  std::string error;
  REQUIRE(request.data.AddColumn("x", {0, 1, 2, 3, 4, 5, 6, 7}, &error));
  REQUIRE(request.data.AddColumn("y", {1.1, 2.9, 5.2, 6.8, 9.1, 11.0, 12.8, 15.2}, &error));
  request.model.family = "line";
  request.threads = 1;
  FitOutcome outcome;
  REQUIRE(RunFit(request, &outcome, &error));
  JobRecord job = Job(JobState::kDone);
  job.result_json = EncodeFitOutcome(outcome).dump();
  const std::string html = RenderFitPage(job);
  INFO(html);
  CHECK(html.find("refresh") == std::string::npos);
  const size_t starts = html.find("<table id=\"starts\">");
  const size_t basins = html.find("<table id=\"basins\">");
  const size_t best = html.find("<table id=\"best\">");
  REQUIRE(starts != std::string::npos);
  REQUIRE(basins != std::string::npos);
  REQUIRE(best != std::string::npos);
  // Rows after each table's header, up to the next table.
  CHECK(Count(html.substr(starts), "<tr>") == 1 + static_cast<int>(outcome.starts.size()));
  CHECK(Count(html.substr(basins, starts - basins), "<tr>") ==
        1 + static_cast<int>(outcome.basins.size()));
  CHECK(Count(html.substr(best, basins - best), "<tr>") == 1 + 2);  // intercept, slope
  CHECK(html.find(outcome.verdict.summary) != std::string::npos);
  CHECK(html.find("/v1/fits/f00d/plot.svg") != std::string::npos);
}

TEST_CASE("Web page: an unreadable stored result is reported, not a crash", "[server]") {
  JobRecord job = Job(JobState::kDone);
  job.result_json = "{\"model\": 3}";
  CHECK(RenderFitPage(job).find("the stored result could not be read") != std::string::npos);
  job.result_json = "not json";
  CHECK(RenderFitPage(job).find("the stored result could not be read") != std::string::npos);
}

TEST_CASE("Web page: the listing links every job to its page", "[server]") {
  JobPage page;
  page.jobs.push_back(Job(JobState::kDone));
  page.jobs.push_back(Job(JobState::kQueued));
  page.jobs.back().id = "beef";
  const std::string html = RenderJobsPage(page);
  CHECK(html.find("href=\"/?fit=f00d\"") != std::string::npos);
  CHECK(html.find("href=\"/?fit=beef\"") != std::string::npos);
  CHECK(Count(html, "/plot.svg") == 1);  // only the done one has a plot
}

}  // namespace
}  // namespace foothold
