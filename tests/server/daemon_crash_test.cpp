// Crash safety: 200 small jobs, kill -9 while they run, restart on the same store. Every
// accepted job completes exactly once and each result equals a clean run's.
#include <catch2/catch.hpp>
#include <fstream>
#include <map>
#include <nlohmann/json.hpp>
#include <regex>
#include <sstream>
#include <string>

#include "tests/server/http_test_client.h"
#include "tests/server/result_compare.h"

namespace foothold {
namespace {

using nlohmann::json;
using testing::Request;
using testing::StripTimings;

constexpr int kNumJobs = 200;
constexpr int kNumVariants = 4;

std::string Variant(int variant) {
  std::string x, y;
  for (int i = 0; i < 40; ++i) {
    const double t = i * 0.25;
    const double value =
        (2 + variant) * std::exp(-t / (1.0 + 0.3 * variant)) + 0.1 + 0.01 * std::cos(7.0 * i);
    x += (i ? "," : "") + std::to_string(t);
    y += (i ? "," : "") + std::to_string(value);
  }
  return R"({"label": "v)" + std::to_string(variant) +
         R"(", "model": {"family": "exp_decay"}, "data": {"x": [)" + x + "], \"y\": [" + y + "]}}";
}

}  // namespace

TEST_CASE("Daemon: kill -9 mid-run loses no job and reruns give the clean results", "[server]") {
  // Clean results, one per variant, from a daemon that is never disturbed.
  std::map<int, json> clean;
  {
    testing::Daemon daemon(testing::FreshStore("crash_clean"), {"--workers", "2"});
    REQUIRE(daemon.port() > 0);
    for (int v = 0; v < kNumVariants; ++v) {
      const testing::HttpReply reply = Request(daemon.port(), "POST", "/v1/fits", Variant(v),
                                               "application/json", {{"Prefer", "wait=30"}});
      REQUIRE(reply.status == 200);
      clean[v] = json::parse(reply.body)["result"];
      StripTimings(&clean[v]);
    }
  }

  const std::string store = testing::FreshStore("crash");
  std::map<std::string, int> variant_of;
  {
    testing::Daemon daemon(store, {"--workers", "2"});
    REQUIRE(daemon.port() > 0);
    for (int i = 0; i < kNumJobs; ++i) {
      const testing::HttpReply reply =
          Request(daemon.port(), "POST", "/v1/fits", Variant(i % kNumVariants), "application/json");
      REQUIRE(reply.status == 202);
      variant_of[json::parse(reply.body)["id"]] = i % kNumVariants;
    }
    // Kill once some jobs finished and others still wait, bounded in time.
    for (int i = 0; i < 200; ++i) {
      const json page =
          json::parse(Request(daemon.port(), "GET", "/v1/fits?state=done&limit=20").body);
      if (page["jobs"].size() >= 10) break;
      std::this_thread::sleep_for(std::chrono::milliseconds(10));
    }
    daemon.Signal(SIGKILL);
    CHECK(daemon.WaitExit(std::chrono::seconds(5)) == -2);
  }
  REQUIRE(variant_of.size() == static_cast<size_t>(kNumJobs));

  testing::Daemon restarted(store, {"--workers", "2"});
  REQUIRE(restarted.port() > 0);
  const auto until = std::chrono::steady_clock::now() + std::chrono::seconds(120);
  std::map<std::string, json> results;
  while (results.size() < variant_of.size() && std::chrono::steady_clock::now() < until) {
    for (const auto& [id, variant] : variant_of) {
      if (results.count(id)) continue;
      const testing::HttpReply reply = Request(restarted.port(), "GET", "/v1/fits/" + id);
      REQUIRE(reply.status == 200);
      const json job = json::parse(reply.body);
      if (job["state"] == "done") results[id] = job["result"];
      CHECK(job["state"] != "failed");
    }
    if (results.size() < variant_of.size())
      std::this_thread::sleep_for(std::chrono::milliseconds(50));
  }
  REQUIRE(results.size() == variant_of.size());
  for (auto& [id, result] : results) {
    StripTimings(&result);
    INFO("job " << id);
    CHECK(result == clean[variant_of[id]]);
  }

  // Exactly once: the store holds one result per job (checked above) and no job's finishing
  // line appears twice across both runs' logs. A line can be missing: the log line follows
  // the store's commit, so a kill between the two loses the line (never the result) — at
  // most one per worker (2) that was finishing at that instant.
  std::ifstream log(store + ".log");
  std::stringstream text;
  text << log.rdbuf();
  const std::string all = text.str();
  int num_missing_lines = 0;
  for (const auto& [id, variant] : variant_of) {
    size_t count = 0;
    for (size_t at = all.find("job " + id + " done"); at != std::string::npos;
         at = all.find("job " + id + " done", at + 1)) {
      ++count;
    }
    INFO("job " << id);
    CHECK(count <= 1);
    if (count == 0) ++num_missing_lines;
  }
  CHECK(num_missing_lines <= 2);
}

}  // namespace foothold
