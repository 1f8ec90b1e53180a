// Model comparison as a job option, over real loopback HTTP against `foothold serve`: a
// "compare" request ranks the families and answers with the winner's result, bad entries
// are 4xx problem documents naming compare[i], the ranking equals `foothold compare --json`
// on the same data, and a comparison can be cancelled.
#include <catch2/catch.hpp>
#include <cmath>
#include <cstdio>
#include <fstream>
#include <iomanip>
#include <nlohmann/json.hpp>
#include <random>
#include <string>

#include "tests/server/http_test_client.h"
#include "tests/server/result_compare.h"

namespace foothold {
namespace {

using nlohmann::json;
using testing::Request;

constexpr int kPoints = 41;
constexpr double kHeight = 10;
constexpr double kNoise = 0.2;  // SNR 50, as the compare command's tests
constexpr const char* kFamilies = R"(["gaussian", "lorentzian", "pseudo_voigt"])";
constexpr double kWeightSumTolerance = 1e-12;

testing::Daemon& SharedDaemon() {
  static testing::Daemon daemon(testing::FreshStore("compare"), {"--workers", "2"});
  return daemon;
}

// A Lorentzian peak on a baseline with Gaussian noise (fixed seed).
json LorentzianData(int num_points, std::uint32_t seed) {
  std::mt19937 engine(seed);
  std::normal_distribution<double> noise(0, kNoise);
  json x = json::array();
  json y = json::array();
  for (int i = 0; i < num_points; ++i) {
    const double xi = 10.0 * i / (num_points - 1);
    x.push_back(xi);
    y.push_back(kHeight / (1 + (xi - 5) * (xi - 5) / (1.2 * 1.2)) + 1 + noise(engine));
  }
  return {{"x", x}, {"y", y}};
}

json CompareRequest(const json& data, int starts) {
  return {{"label", "compare-job"},
          {"compare", json::parse(kFamilies)},
          {"data", data},
          {"starts", starts},
          {"seed", 7}};
}

json WaitDone(int port, const std::string& id) {
  json job;
  for (int i = 0; i < 1200; ++i) {
    job = json::parse(Request(port, "GET", "/v1/fits/" + id).body);
    const std::string state = job["state"];
    if (state != "queued" && state != "running") break;
    std::this_thread::sleep_for(std::chrono::milliseconds(50));
  }
  return job;
}

std::string RunCompareCli(const std::string& arguments) {
  return testing::CaptureOutput(std::string(FOOTHOLD_BINARY_DIR) + "/server/foothold compare " +
                                arguments);
}

}  // namespace

TEST_CASE("CompareJob: lorentzian data rank lorentzian first; the result is the winner's",
          "[server]") {
  const int port = SharedDaemon().port();
  REQUIRE(port > 0);
  const testing::HttpReply reply =
      Request(port, "POST", "/v1/fits", CompareRequest(LorentzianData(kPoints, 5), 8).dump(),
              "application/json", {{"Prefer", "wait=60"}});
  REQUIRE(reply.status == 200);
  const json job = json::parse(reply.body);
  REQUIRE(job["state"] == "done");
  const json& result = job["result"];
  CHECK(result["model"]["family"] == "lorentzian");
  CHECK(result["best"]["parameters"].contains("hwhm"));
  const json& comparison = result["comparison"];
  CHECK(comparison["winner"] == "lorentzian");
  const json& ranking = comparison["ranking"];
  REQUIRE(ranking.size() == 3);
  double total_weight = 0;
  for (size_t k = 0; k < ranking.size(); ++k) {
    CHECK(ranking[k]["rank"] == static_cast<int>(k) + 1);
    CHECK(ranking[k]["converged"] == true);
    total_weight += ranking[k]["akaike_weight"].get<double>();
    if (k > 0) CHECK(ranking[k]["aicc"].get<double>() >= ranking[k - 1]["aicc"].get<double>());
  }
  CHECK(std::abs(total_weight - 1) < kWeightSumTolerance);
  CHECK(ranking[0]["family"] == "lorentzian");
  CHECK(ranking[0]["delta_aicc"] == 0.0);
  CHECK(ranking[0]["rss"] == result["best"]["rss"]);
  CHECK(comparison["margin_aicc"].get<double>() ==
        Approx(ranking[1]["aicc"].get<double>() - ranking[0]["aicc"].get<double>()));
  // gaussian (eta = 0) and lorentzian (eta = 1) both nest in pseudo_voigt.
  REQUIRE(comparison["nested"].size() == 2);
  bool has_lorentzian_test = false;
  for (const json& test : comparison["nested"]) {
    CHECK(test["fuller"] == "pseudo_voigt");
    CHECK(test["on_boundary"] == true);
    if (test["simpler"] == "lorentzian") {
      has_lorentzian_test = true;
      CHECK(test["nesting"] == "eta = 1");
      CHECK(test["df_extra"] == 1);
      CHECK(test["df_residual"] == kPoints - 5);
    }
  }
  CHECK(has_lorentzian_test);
  // Progress is summed over the three families: every start of each ran.
  CHECK(job["progress"]["starts_finished"] == job["progress"]["starts_planned"]);
  CHECK(job["progress"]["starts_finished"].get<int>() >= 3 * 8);

  const std::string id = job["id"];
  const json basins = json::parse(Request(port, "GET", "/v1/fits/" + id + "/basins").body);
  CHECK(basins["basins"] == result["basins"]);
  const json starts = json::parse(Request(port, "GET", "/v1/fits/" + id + "/starts").body);
  CHECK(starts["starts"] == result["starts"]);
  const testing::HttpReply plot = Request(port, "GET", "/v1/fits/" + id + "/plot.svg");
  CHECK(plot.status == 200);
  CHECK(plot.body.find("<polyline class=\"fit\"") != std::string::npos);
}

TEST_CASE("CompareJob: the daemon's comparison equals foothold compare --json", "[server]") {
  const int port = SharedDaemon().port();
  REQUIRE(port > 0);
  const json data = LorentzianData(kPoints, 11);
  // model names a family too: it joins the comparison, first.
  json body = CompareRequest(data, 8);
  body["model"] = {{"family", "gaussian"}};
  body["compare"] = {"lorentzian", "pseudo_voigt", "gaussian"};
  const testing::HttpReply reply =
      Request(port, "POST", "/v1/fits", body.dump(), "application/json", {{"Prefer", "wait=60"}});
  REQUIRE(reply.status == 200);
  const json from_daemon = json::parse(reply.body)["result"]["comparison"];
  REQUIRE(from_daemon["ranking"].size() == 3);

  const std::string path = std::string(FOOTHOLD_BINARY_DIR) + "/compare_job_test.csv";
  {
    std::ofstream file(path);
    file << "x,y\n" << std::setprecision(17);
    for (size_t i = 0; i < data["x"].size(); ++i) {
      file << data["x"][i].get<double>() << ',' << data["y"][i].get<double>() << '\n';
    }
  }
  const json from_cli = json::parse(
      RunCompareCli(path + " --families gaussian,lorentzian,pseudo_voigt --starts 8 --seed 7 "
                           "--json"));
  CHECK(from_cli["comparison"] == from_daemon);
  REQUIRE(from_cli["models"].size() == 3);
  CHECK(from_cli["models"][0]["family"] == from_daemon["winner"]);
}

TEST_CASE("CompareJob: a batch with compare gives each dataset its comparison", "[server]") {
  const int port = SharedDaemon().port();
  REQUIRE(port > 0);
  const json batch = {{"compare", {"gaussian", "lorentzian"}},
                      {"starts", 4},
                      {"datasets",
                       {{{"label", "c0"}, {"data", LorentzianData(kPoints, 21)}},
                        {{"label", "c1"}, {"data", LorentzianData(kPoints, 22)}}}}};
  const testing::HttpReply accepted =
      Request(port, "POST", "/v1/batches", batch.dump(), "application/json");
  REQUIRE(accepted.status == 202);
  const json jobs = json::parse(accepted.body)["jobs"];
  REQUIRE(jobs.size() == 2);
  for (const json& entry : jobs) {
    const json job = WaitDone(port, entry["id"]);
    REQUIRE(job["state"] == "done");
    CHECK(job["result"]["comparison"]["ranking"].size() == 2);
    CHECK(job["result"]["comparison"]["winner"] == "lorentzian");
  }
}

TEST_CASE("CompareJob: bad compare entries are 4xx problems naming the entry", "[server]") {
  const int port = SharedDaemon().port();
  REQUIRE(port > 0);
  const std::string data =
      R"("data": {"x": [1, 2, 3, 4, 5, 6, 7, 8], "y": [1, 2, 4, 8, 9, 5, 2, 1]})";
  struct Bad {
    std::string target;
    std::string fields;  // the request's fields before data
    int status;
    std::string detail_part;
  };
  const std::vector<Bad> cases = {
      {"/v1/fits", R"("compare": ["gaussian", "nonesuch"])", 422,
       "compare[1].family: unknown family"},
      {"/v1/fits", R"("compare": ["gaussian", {"expression": "a*x", "parameters": ["a"]}])", 400,
       "compare[1]: expected a catalogue family"},
      {"/v1/fits", R"("compare": [])", 400, "compare: expected a non-empty array"},
      {"/v1/fits", R"("compare": "gaussian,lorentzian")", 400, "compare: expected"},
      {"/v1/fits", R"("compare": ["gaussian", 3])", 400, "compare[1]: expected a family name"},
      {"/v1/fits", R"("compare": ["gaussian", {"family": "line", "peaks": 2}])", 422,
       "compare[1].peaks"},
      {"/v1/fits", R"("compare": ["lorentzian", {"family": "nope"}])", 422, "compare[1].family"},
      {"/v1/fits", R"("compare": ["gaussian", "lorentzian", "gaussian"])", 422,
       "compare[2]: 'gaussian' is given twice (also compare[0])"},
      {"/v1/fits", R"("compare": ["gaussian"])", 422, "at least two different families"},
      {"/v1/fits", R"("model": {"family": "gaussian"}, "compare": ["gaussian"])", 422,
       "at least two"},
      {"/v1/fits", R"("compare": ["gaussian", {"family": "polynomial", "degree": 9}])", 422,
       "compare[1] (polynomial(9)): data: 8 points but the model has 10 free parameters"},
      {"/v1/fits",
       R"("model": {"expression": "a*x", "parameters": ["a"]}, "compare": ["line", "gaussian"])",
       422, "model: an expression cannot join compare"},
      {"/v1/fits", R"("compare": ["line", "gaussian"], "fix": {"baseline": 0})", 422,
       "fix: not accepted with compare"},
      {"/v1/fits", R"("compare": ["line", "gaussian"], "loss": "sharp")", 422, "loss = 'sharp'"},
      {"/v1/batches", R"("compare": ["gaussian", "nonesuch"], "datasets": [{)" + data + "}]", 422,
       "datasets[0]: compare[1].family"},
  };
  for (size_t i = 0; i < cases.size(); ++i) {
    const Bad& bad = cases[i];
    const std::string body =
        bad.target == "/v1/fits" ? "{" + bad.fields + ", " + data + "}" : "{" + bad.fields + "}";
    INFO("case " << i << ": " << body);
    const testing::HttpReply reply = Request(port, "POST", bad.target, body, "application/json");
    CHECK(reply.status == bad.status);
    CHECK(reply.content_type == "application/problem+json");
    const json problem = json::parse(reply.body, nullptr, false);
    REQUIRE(problem.is_object());
    CHECK(problem["status"] == reply.status);
    INFO("detail: " << problem["detail"]);
    CHECK(problem["detail"].get<std::string>().find(bad.detail_part) != std::string::npos);
  }
  CHECK(Request(port, "GET", "/healthz").status == 200);
}

TEST_CASE("CompareJob: cancelling a running comparison stops it within a family and between",
          "[server]") {
  const int port = SharedDaemon().port();
  REQUIRE(port > 0);
  // Big enough that three families of 256 starts take far longer than the test waits.
  const testing::HttpReply accepted =
      Request(port, "POST", "/v1/fits", CompareRequest(LorentzianData(20000, 3), 256).dump(),
              "application/json");
  REQUIRE(accepted.status == 202);
  const std::string id = json::parse(accepted.body)["id"];
  json job;
  for (int i = 0; i < 1200; ++i) {
    job = json::parse(Request(port, "GET", "/v1/fits/" + id).body);
    if (job["state"] == "running" && job["progress"]["starts_finished"].get<int>() > 0) break;
    std::this_thread::sleep_for(std::chrono::milliseconds(25));
  }
  REQUIRE(job["state"] == "running");
  const auto cancelled_at = std::chrono::steady_clock::now();
  CHECK(Request(port, "DELETE", "/v1/fits/" + id).status == 202);
  job = WaitDone(port, id);
  const double seconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - cancelled_at).count();
  CHECK(job["state"] == "cancelled");
  CHECK(seconds < 20);
  // The family running when the cancel came stopped inside its multistart, the later ones
  // before their first start: fewer starts finished than planned, the last family cancelled.
  CHECK(job["progress"]["starts_finished"].get<int>() <
        job["progress"]["starts_planned"].get<int>());
  const json& ranking = job["result"]["comparison"]["ranking"];
  REQUIRE(ranking.size() == 3);
  bool is_last_cancelled = false;
  for (const json& row : ranking) {
    if (row["family"] == "pseudo_voigt") is_last_cancelled = row["termination"] == "cancelled";
  }
  CHECK(is_last_cancelled);
}

}  // namespace foothold
