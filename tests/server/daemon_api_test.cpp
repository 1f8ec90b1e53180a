// The daemon over real loopback HTTP: each resource's happy path, the same answer as
// `foothold fit --json`, and a long list of bad requests that must each be a 4xx problem
// document while the daemon stays healthy.
#include <catch2/catch.hpp>
#include <cmath>
#include <cstdio>
#include <fstream>
#include <nlohmann/json.hpp>
#include <string>

#include "tests/server/http_test_client.h"
#include "tests/server/result_compare.h"

namespace foothold {
namespace {

using nlohmann::json;
using testing::Request;
using testing::StripTimings;

constexpr const char* kLineFit =
    R"({"label": "api-line", "model": {"family": "line"}, "seed": 3,
        "data": {"x": [1, 2, 3, 4, 5, 6], "y": [2.1, 3.9, 6.2, 7.8, 10.1, 12.2]}})";

testing::Daemon& SharedDaemon() {
  static testing::Daemon daemon(
      testing::FreshStore("api"),
      {"--workers", "2", "--max-points", "50", "--max-body-bytes", "20000", "--max-starts", "64"});
  return daemon;
}

// Timings differ between runs; everything else must agree.

std::string RunCliJson(const std::string& request_path) {
  return testing::CaptureOutput(std::string(FOOTHOLD_BINARY_DIR) +
                                "/server/foothold fit --request " + request_path + " --json");
}

}  // namespace

TEST_CASE("Daemon: a fit posted with Prefer wait returns the CLI's result document", "[server]") {
  testing::Daemon& daemon = SharedDaemon();
  REQUIRE(daemon.port() > 0);
  const testing::HttpReply reply = Request(daemon.port(), "POST", "/v1/fits", kLineFit,
                                           "application/json", {{"Prefer", "wait=30"}});
  REQUIRE(reply.status == 200);
  const json job = json::parse(reply.body);
  CHECK(job["state"] == "done");
  CHECK(job["label"] == "api-line");
  CHECK(job["links"]["plot"] == "/v1/fits/" + job["id"].get<std::string>() + "/plot.svg");
  json from_daemon = job["result"];

  const std::string path = std::string(FOOTHOLD_BINARY_DIR) + "/daemon_api_line.json";
  std::ofstream(path) << kLineFit;
  json from_cli = json::parse(RunCliJson(path));
  StripTimings(&from_daemon);
  StripTimings(&from_cli);
  CHECK(from_daemon == from_cli);
}

TEST_CASE("Daemon: job resources, listing, batches, guesses, plots and service endpoints",
          "[server]") {
  const int port = SharedDaemon().port();
  REQUIRE(port > 0);
  const testing::HttpReply accepted =
      Request(port, "POST", "/v1/fits", kLineFit, "application/json");
  REQUIRE(accepted.status == 202);
  const std::string id = json::parse(accepted.body)["id"];
  CHECK(accepted.Header("Location") == "/v1/fits/" + id);
  json job;
  for (int i = 0; i < 200; ++i) {
    job = json::parse(Request(port, "GET", "/v1/fits/" + id).body);
    if (job["state"] == "done") break;
    std::this_thread::sleep_for(std::chrono::milliseconds(25));
  }
  REQUIRE(job["state"] == "done");
  CHECK(job["progress"]["starts_finished"].get<int>() >= 1);
  CHECK(job["result"]["best"]["parameters"].contains("slope"));

  const json starts = json::parse(Request(port, "GET", "/v1/fits/" + id + "/starts").body);
  CHECK(starts["starts"].size() >= 1);
  const json basins = json::parse(Request(port, "GET", "/v1/fits/" + id + "/basins").body);
  CHECK(basins["basins"].size() >= 1);
  const testing::HttpReply plot = Request(port, "GET", "/v1/fits/" + id + "/plot.svg");
  CHECK(plot.status == 200);
  CHECK(plot.content_type == "image/svg+xml");
  CHECK(plot.body.find("<polyline class=\"fit\"") != std::string::npos);
  CHECK(Request(port, "GET", "/v1/fits/" + id + "/basins.svg").body.find("class=\"basin\"") !=
        std::string::npos);
  const testing::HttpReply again = Request(port, "DELETE", "/v1/fits/" + id);
  CHECK(again.status == 409);
  CHECK(again.content_type == "application/problem+json");

  const json listing = json::parse(Request(port, "GET", "/v1/fits?label=api-line&limit=1").body);
  REQUIRE(listing["jobs"].size() == 1);
  CHECK(listing["jobs"][0]["label"] == "api-line");
  CHECK(Request(port, "GET", "/v1/fits?state=done&created_since=2020-01-01T00:00:00Z").status ==
        200);

  const std::string csv = "x,y\n1,2.1\n2,3.9\n3,6.2\n4,7.8\n";
  const testing::HttpReply csv_fit = Request(port, "POST", "/v1/fits?family=line&label=csv", csv,
                                             "text/csv", {{"Prefer", "wait=30"}});
  CHECK(csv_fit.status == 200);
  const testing::HttpReply expr_fit = Request(port, "POST", "/v1/fits?expr=a*x%2Bb&params=a,b", csv,
                                              "text/csv", {{"Prefer", "wait=30"}});
  CHECK(expr_fit.status == 200);

  const std::string batch_body = R"({"model": {"family": "line"}, "datasets": [
      {"label": "b0", "data": {"x": [1, 2, 3], "y": [1, 2, 3.1]}},
      {"label": "b1", "data": {"x": [1, 2, 3], "y": [2, 4, 6.1]}}]})";
  const testing::HttpReply batch =
      Request(port, "POST", "/v1/batches", batch_body, "application/json");
  REQUIRE(batch.status == 202);
  const json batch_json = json::parse(batch.body);
  CHECK(batch_json["jobs"].size() == 2);
  const json aggregate =
      json::parse(Request(port, "GET", "/v1/batches/" + batch_json["id"].get<std::string>()).body);
  CHECK(aggregate["total"] == 2);
  CHECK(aggregate["jobs"][1]["label"] == "b1");

  const testing::HttpReply guesses =
      Request(port, "POST", "/v1/guesses",
              R"({"model": {"family": "line"}, "data": {"x": [1, 2, 3], "y": [1, 2, 3]}})",
              "application/json");
  REQUIRE(guesses.status == 200);
  CHECK(json::parse(guesses.body)["start"].contains("slope"));

  CHECK(json::parse(Request(port, "GET", "/v1/families").body)["families"].size() > 5);
  CHECK(Request(port, "GET", "/healthz").status == 200);
  CHECK(Request(port, "GET", "/readyz").status == 200);
  const testing::HttpReply metrics = Request(port, "GET", "/metrics");
  CHECK(metrics.content_type.find("text/plain; version=0.0.4") == 0);
  CHECK(metrics.body.find("foothold_http_requests_total{method=\"POST\",route=\"/v1/fits\"") !=
        std::string::npos);
  CHECK(metrics.body.find("foothold_fit_duration_seconds_count") != std::string::npos);
  CHECK(Request(port, "GET", "/").body.find("/plot.svg") != std::string::npos);
}

TEST_CASE("Daemon: the plot of a peaks-auto fit draws the peak count the fit chose",
          "[server]") {
  const int port = SharedDaemon().port();
  REQUIRE(port > 0);
  // Two well separated gaussians on 40 points; the plot rebuilds the model from the
  // result's resolved count, without refitting every count.
  json x = json::array(), y = json::array();
  for (int i = 0; i < 40; ++i) {
    const double xi = 0.25 * i;
    x.push_back(xi);
    y.push_back(4 * std::exp(-(xi - 3) * (xi - 3) / 0.5) +
                2 * std::exp(-(xi - 7) * (xi - 7) / 0.5) + 0.02 * std::sin(3.1 * i));
  }
  const json body = {{"model", {{"family", "multi_gaussian"}, {"peaks", "auto"}}},
                     {"data", {{"x", x}, {"y", y}}}};
  const testing::HttpReply posted = Request(port, "POST", "/v1/fits", body.dump(),
                                            "application/json", {{"Prefer", "wait=60"}});
  REQUIRE(posted.status == 200);
  const json job = json::parse(posted.body);
  CHECK(job["result"]["model"]["peaks"] == 2);
  const testing::HttpReply plot =
      Request(port, "GET", "/v1/fits/" + job["id"].get<std::string>() + "/plot.svg");
  CHECK(plot.status == 200);
  CHECK(plot.body.find("<polyline class=\"fit\"") != std::string::npos);
}

TEST_CASE("Daemon: every bad request is a 4xx problem document and the daemon stays healthy",
          "[server]") {
  const int port = SharedDaemon().port();
  REQUIRE(port > 0);
  struct Bad {
    const char* method;
    std::string target;
    std::string body;
    std::string content_type;
    int status;
    const char* detail_part;  // must appear in the detail
  };
  const std::string xy = R"("data": {"x": [1, 2, 3], "y": [1, 2, 3]})";
  std::string too_many = R"({"model": {"family": "line"}, "data": {"x": [)";
  for (int i = 0; i < 60; ++i) too_many += (i ? "," : "") + std::to_string(i);
  too_many += R"(], "y": [)";
  for (int i = 0; i < 60; ++i) too_many += (i ? "," : "") + std::to_string(i);
  too_many += "]}}";
  const std::string json_type = "application/json";
  const std::vector<Bad> cases = {
      {"POST", "/v1/fits", "{", json_type, 400, "invalid JSON"},
      {"POST", "/v1/fits", "", json_type, 400, ""},
      {"POST", "/v1/fits", "[1, 2]", json_type, 400, ""},
      {"POST", "/v1/fits", "null", json_type, 400, ""},
      {"POST", "/v1/fits", R"({"model": {"family": "line"}})", json_type, 400, "data"},
      {"POST", "/v1/fits", "{" + xy + "}", json_type, 400, "model"},
      {"POST", "/v1/fits", R"({"model": "line", )" + xy + "}", json_type, 400, "model"},
      {"POST", "/v1/fits", R"({"model": {"family": 3}, )" + xy + "}", json_type, 400, "family"},
      {"POST", "/v1/fits",
       R"({"model": {"family": "line"}, "data": {"x": [1, 2], "y": [1, "NaN"]}})", json_type, 400,
       "data.y[1]"},
      {"POST", "/v1/fits", R"({"model": {"family": "line"}, "data": {"x": [1, 2], "y": [1]}})",
       json_type, 400, ""},
      {"POST", "/v1/fits", R"({"model": {"family": "line"}, "data": {"x": "1,2", "y": [1, 2]}})",
       json_type, 400, "data.x"},
      {"POST", "/v1/fits", R"({"model": {"family": "line"}, "data": [1, 2]})", json_type, 400,
       "data"},
      {"POST", "/v1/fits", R"({"model": {"family": "line"}, "colour": 1, )" + xy + "}", json_type,
       400, "colour"},
      {"POST", "/v1/fits", R"({"model": {"family": "line"}, "starts": "many", )" + xy + "}",
       json_type, 400, "starts"},
      {"POST", "/v1/fits", R"({"model": {"family": "line"}, "seed": -1, )" + xy + "}", json_type,
       400, "seed"},
      {"POST", "/v1/fits", R"({"model": {"family": "line"}, "start": {"slope": "x"}, )" + xy + "}",
       json_type, 400, "start"},
      {"POST", "/v1/fits", R"({"model": {"family": "line"}, "bounds": {"slope": [1]}, )" + xy + "}",
       json_type, 400, "bounds"},
      {"POST", "/v1/fits", R"({"model": {"family": "nonesuch"}, )" + xy + "}", json_type, 422,
       "unknown family"},
      {"POST", "/v1/fits", R"({"model": {"expression": "a*x+", "parameters": ["a"]}, )" + xy + "}",
       json_type, 422, "model.expression"},
      {"POST", "/v1/fits", R"({"model": {"expression": "a*q", "parameters": ["a"]}, )" + xy + "}",
       json_type, 422, ""},
      {"POST", "/v1/fits",
       R"({"model": {"family": "line"}, "start": {"slope": 5}, "bounds": {"slope": [0, 1]}, )" +
           xy + "}",
       json_type, 422, "slope"},
      {"POST", "/v1/fits", R"({"model": {"family": "line"}, "start": {"nope": 1}, )" + xy + "}",
       json_type, 422, "nope"},
      {"POST", "/v1/fits", R"({"model": {"family": "line"}, "starts": 65, )" + xy + "}", json_type,
       422, "max_starts"},
      {"POST", "/v1/fits", too_many, json_type, 422, "max_points"},
      {"POST", "/v1/fits", std::string(30000, ' '), json_type, 413, "max_body_bytes"},
      {"POST", "/v1/fits", "x,y\n1,2\n", "text/plain", 415, "Content-Type"},
      {"POST", "/v1/fits", kLineFit, "", 415, "Content-Type"},
      {"POST", "/v1/fits", "x,y\n1,2\n2,4\n3,5\n", "text/csv", 400, "family"},
      {"POST", "/v1/fits?family=line", "x,y\n1,2\n2,zz\n", "text/csv", 400, "CSV"},
      {"POST", "/v1/fits?family=line", "", "text/csv", 400, "CSV"},
      {"POST", "/v1/fits?family=line&colour=red", "x,y\n1,2\n2,4\n3,5\n", "text/csv", 400,
       "colour"},
      {"POST", "/v1/fits?family=line&starts=lots", "x,y\n1,2\n2,4\n3,5\n", "text/csv", 400,
       "starts"},
      {"POST", "/v1/fits?family=nonesuch", "x,y\n1,2\n2,4\n3,5\n", "text/csv", 422, "nonesuch"},
      {"POST", "/v1/fits?family=line&expr=a*x", "x,y\n1,2\n2,4\n3,5\n", "text/csv", 400, ""},
      {"POST", "/v1/fits?family=%zz", "x,y\n1,2\n", "text/csv", 400, "percent"},
      {"GET", "/v1/fits/f0000000000000000", "", "", 404, "no such job"},
      {"GET", "/v1/fits/f0000000000000000/starts", "", "", 404, ""},
      {"GET", "/v1/fits/f0000000000000000/plot.svg", "", "", 404, ""},
      {"DELETE", "/v1/fits/f0000000000000000", "", "", 404, ""},
      {"GET", "/v1/batches/b000", "", "", 404, "no such batch"},
      {"GET", "/v1/nowhere", "", "", 404, "no resource"},
      {"PUT", "/v1/fits", "", "", 405, "allowed"},
      {"DELETE", "/v1/families", "", "", 405, "GET"},
      {"POST", "/healthz", "", "", 405, ""},
      {"GET", "/v1/fits?state=sleeping", "", "", 400, "state"},
      {"GET", "/v1/fits?limit=0", "", "", 400, "limit"},
      {"GET", "/v1/fits?created_since=yesterday", "", "", 400, "RFC 3339"},
      {"GET", "/v1/fits?cursor=abc", "", "", 400, "cursor"},
      {"GET", "/v1/fits?colour=red", "", "", 400, "colour"},
      {"POST", "/v1/batches", R"({"model": {"family": "line"}})", json_type, 400, "datasets"},
      {"POST", "/v1/batches", R"({"model": {"family": "line"}, "datasets": []})", json_type, 400,
       "datasets"},
      {"POST", "/v1/batches",
       R"({"model": {"family": "line"}, "datasets": [{"data": {"x": [1, 2], "y": [1, null]}}]})",
       json_type, 400, "datasets[0].data.y[1]"},
      {"POST", "/v1/batches",
       R"({"model": {"family": "nonesuch"}, "datasets": [{"data": {"x": [1, 2, 3], "y": [1, 2, 3]}}]})",
       json_type, 422, "datasets[0]"},
      {"POST", "/v1/batches", "x,y\n1,2\n", "text/csv", 415, ""},
      {"POST", "/v1/guesses", R"({"model": {"family": "nonesuch"}, )" + xy + "}", json_type, 422,
       "nonesuch"},
      {"POST", "/v1/guesses", "{]", json_type, 400, "invalid JSON"},
  };
  REQUIRE(cases.size() >= 40);
  for (size_t i = 0; i < cases.size(); ++i) {
    const Bad& bad = cases[i];
    INFO("case " << i << ": " << bad.method << ' ' << bad.target << " body "
                 << bad.body.substr(0, 80));
    const testing::HttpReply reply =
        Request(port, bad.method, bad.target, bad.body, bad.content_type);
    CHECK(reply.status == bad.status);
    CHECK(reply.content_type == "application/problem+json");
    const json problem = json::parse(reply.body, nullptr, false);
    REQUIRE(problem.is_object());
    CHECK(problem["status"] == reply.status);
    CHECK(problem["type"].get<std::string>().rfind("https://foothold.dev/problems/", 0) == 0);
    CHECK_FALSE(problem["title"].get<std::string>().empty());
    CHECK(problem["detail"].get<std::string>().find(bad.detail_part) != std::string::npos);
    if (bad.status == 405) CHECK_FALSE(reply.Header("Allow").empty());
  }
  CHECK(Request(port, "GET", "/healthz").status == 200);
  CHECK(Request(port, "GET", "/readyz").status == 200);
}

}  // namespace foothold
