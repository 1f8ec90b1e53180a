// Profile-likelihood intervals through the server: a request with intervals "profile" gets
// them beside the Wald intervals in the outcome, the result document and the text report;
// `foothold fit --intervals profile` asks for them; the verdict flags intervals_disagree.
#include <unistd.h>

#include <catch2/catch.hpp>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <limits>
#include <sstream>
#include <string>
#include <vector>

#include "server/cli.h"
#include "server/fit_service.h"
#include "server/json_codec.h"
#include "server/verdict.h"
#include "tests/server/temp_dir.h"

namespace fs = std::filesystem;
using foothold::FitOutcome;
using foothold::FitRequest;
using foothold::Json;

namespace {

// The gaussian (3, 5, 0.8, 0.5) of tests/reference/profile_scipy.py with its absolute sigma
// 0.3: the engine test holds its SciPy profile intervals, of which we check two.
std::vector<double> GaussianX() {
  std::vector<double> x;
  for (int i = 0; i <= 40; ++i) x.push_back(0.25 * i);
  return x;
}

std::vector<double> GaussianY() {
  std::vector<double> y;
  for (int i = 0; i <= 40; ++i) {
    const double u = (0.25 * i - 5.0) / 0.8;
    y.push_back(3.0 * std::exp(-0.5 * u * u) + 0.5 + 0.4 * std::sin(2.3 * i + 1.0));
  }
  return y;
}

// tests/reference/profile_scipy.py (Debian python3-scipy 1.10.1): the profile interval of
// sigma is [0.7023850546259665, 0.9108136288118509], of height [2.6892293064, 3.3176534191].
constexpr double kScipySigmaLow = 0.7023850546259665;
constexpr double kScipySigmaHigh = 0.9108136288118509;
// The default crossing tolerance puts the ends within about 1e-4 of the half-width; the
// multistart optimum differs from SciPy's by far less.
constexpr double kEndTolerance = 1e-3;

FitRequest GaussianRequest() {
  FitRequest request;
  std::string error;
  REQUIRE(request.data.AddColumn("x", GaussianX(), &error));
  REQUIRE(request.data.AddColumn("y", GaussianY(), &error));
  REQUIRE(request.data.AddColumn("sigma", std::vector<double>(41, 0.3), &error));
  request.model.family = "gaussian";
  request.start = {{"height", 3}, {"center", 5}, {"sigma", 0.8}, {"baseline", 0.5}};
  request.starts = 1;
  return request;
}

FitOutcome Fit(const FitRequest& request) {
  FitOutcome outcome;
  std::string error;
  const bool fitted = foothold::RunFit(request, &outcome, &error);
  INFO(error);
  REQUIRE(fitted);
  return outcome;
}

bool HasFlag(const FitOutcome& outcome, const std::string& flag) {
  for (const std::string& f : outcome.verdict.flags) {
    if (f == flag) return true;
  }
  return false;
}

// A scratch folder per test case, removed afterwards.
class TempDir : public foothold::testing::TempDir {
 public:
  TempDir() : foothold::testing::TempDir("foothold-profile-test") {}
};

std::string GaussianCsv() {
  std::ostringstream csv;
  csv.precision(17);
  csv << "x,y,sigma\n";
  const std::vector<double> x = GaussianX();
  const std::vector<double> y = GaussianY();
  for (size_t i = 0; i < x.size(); ++i) csv << x[i] << ',' << y[i] << ",0.3\n";
  return csv.str();
}

struct CliRun {
  int code = -1;
  std::string out;
  std::string err;
};

CliRun Run(const std::vector<std::string>& args) {
  std::ostringstream out;
  std::ostringstream err;
  CliRun run;
  run.code = foothold::RunCli(args, out, err);
  run.out = out.str();
  run.err = err.str();
  return run;
}

}  // namespace

TEST_CASE("ProfileIntervals: intervals profile reach the outcome and the result document",
          "[server]") {
  FitRequest request = GaussianRequest();
  request.intervals = "profile";
  const FitOutcome outcome = Fit(request);
  REQUIRE(outcome.IsConverged());
  REQUIRE(outcome.profile.is_computed);
  CHECK(outcome.profile.rule == foothold::ProfileRule::kChiSquare);
  for (const foothold::ProfileInterval& interval : outcome.profile.intervals) {
    INFO(interval.message);
    CHECK(interval.IsClosed());
  }
  CHECK_FALSE(HasFlag(outcome, "intervals_disagree"));

  const Json document = foothold::EncodeFitOutcome(outcome);
  const Json& best = document.at("best");
  CHECK(best.at("intervals") == "profile");
  CHECK(best.at("profile").at("computed") == true);
  CHECK(best.at("profile").at("rule") == "chi_square");
  CHECK(best.at("profile").at("delta_rss").get<double>() == Approx(3.841458820694124));
  const Json& sigma = best.at("parameters").at("sigma");
  REQUIRE(sigma.at("profile_interval").is_array());
  const double low = sigma.at("profile_interval")[0].get<double>();
  const double high = sigma.at("profile_interval")[1].get<double>();
  const double value = sigma.at("value").get<double>();
  CHECK(std::abs(low - kScipySigmaLow) <= kEndTolerance * (value - kScipySigmaLow));
  CHECK(std::abs(high - kScipySigmaHigh) <= kEndTolerance * (kScipySigmaHigh - value));
  CHECK(sigma.at("profile_status").at("lower") == "crossed");
  CHECK(sigma.at("profile_status").at("upper") == "crossed");
  CHECK(sigma.at("profile_status").at("refits").get<int>() > 0);
  // Beside the Wald interval, which is symmetric about the value.
  CHECK(sigma.at("ci_high").get<double>() - value ==
        Approx(value - sigma.at("ci_low").get<double>()));
}

TEST_CASE("ProfileIntervals: a Wald request carries null profile fields", "[server]") {
  const FitOutcome outcome = Fit(GaussianRequest());
  CHECK_FALSE(outcome.HasProfile());
  const Json document = foothold::EncodeFitOutcome(outcome);
  const Json& best = document.at("best");
  CHECK(best.at("intervals") == "wald");
  CHECK(best.at("profile").is_null());
  CHECK(best.at("parameters").at("height").at("profile_interval").is_null());
  CHECK(best.at("parameters").at("height").at("profile_status").is_null());
}

TEST_CASE("ProfileIntervals: a bound inside the interval opens it and flags intervals_disagree",
          "[server]") {
  FitRequest request = GaussianRequest();
  request.intervals = "profile";
  // sigma's estimate is 0.80002 and its profile upper end 0.911: a bound at 0.85 is not
  // active at the optimum but cuts the interval.
  request.bounds = {{"sigma", 0.1, 0.85}};
  const FitOutcome outcome = Fit(request);
  REQUIRE(outcome.profile.is_computed);
  const foothold::ProfileInterval& sigma = outcome.profile.intervals[2];
  INFO(sigma.message);
  CHECK(sigma.upper_end == foothold::ProfileEnd::kBound);
  CHECK(sigma.upper == std::numeric_limits<double>::infinity());
  CHECK(HasFlag(outcome, "intervals_disagree"));
  CHECK_FALSE(HasFlag(outcome, "at_bound"));
  const Json document = foothold::EncodeFitOutcome(outcome);
  const Json& entry = document.at("best").at("parameters").at("sigma");
  CHECK(entry.at("profile_interval")[1].is_null());
  CHECK(entry.at("profile_status").at("upper") == "bound");
  bool named = false;
  for (const std::string& flag : outcome.verdict.flags) named |= flag == "intervals_disagree";
  CHECK(named);
  if (outcome.verdict.flags.front() == "intervals_disagree") {
    CHECK(outcome.verdict.summary.find("sigma") != std::string::npos);
  }
}

TEST_CASE("ProfileIntervals: a robust loss gets no profile and says why", "[server]") {
  FitRequest request = GaussianRequest();
  request.intervals = "profile";
  request.loss = "huber";
  const FitOutcome outcome = Fit(request);
  CHECK_FALSE(outcome.profile.is_computed);
  CHECK(outcome.profile.message.find("the loss is huber") != std::string::npos);
  const Json document = foothold::EncodeFitOutcome(outcome);
  CHECK(document.at("best").at("profile").at("computed") == false);
  CHECK(document.at("best").at("parameters").at("center").at("profile_interval").is_null());
}

TEST_CASE("ProfileIntervals: the verdict compares half-widths with max_interval_ratio",
          "[server]") {
  FitOutcome outcome;
  outcome.parameter_names = {"a", "b"};
  outcome.is_fixed = {false, false};
  outcome.best.termination = foothold::Termination::kCostConverged;
  outcome.best.parameters = Eigen::Vector2d(1, 10);
  outcome.statistics.ci_low = Eigen::Vector2d(0.5, 9);
  outcome.statistics.ci_high = Eigen::Vector2d(1.5, 11);
  outcome.intervals = "profile";
  outcome.profile.is_computed = true;
  outcome.profile.intervals.resize(2);
  for (foothold::ProfileInterval& interval : outcome.profile.intervals) {
    interval.is_profiled = true;
    interval.lower_end = interval.upper_end = foothold::ProfileEnd::kCrossed;
  }
  // a: half-widths 0.4 and 0.9 against 0.5 (ratios 0.8, 1.8); b: 1 and 2.5 against 1.
  outcome.profile.intervals[0].lower = 0.6;
  outcome.profile.intervals[0].upper = 1.9;
  outcome.profile.intervals[1].lower = 9;
  outcome.profile.intervals[1].upper = 12.5;
  foothold::Verdict verdict = foothold::JudgeFit(outcome);
  REQUIRE(verdict.flags.size() == 1);
  CHECK(verdict.flags[0] == "intervals_disagree");
  CHECK(verdict.summary.find("of b disagree (b: upper half-width 2.5 times the Wald one)") !=
        std::string::npos);

  foothold::VerdictOptions options;
  options.max_interval_ratio = 3;
  CHECK(foothold::JudgeFit(outcome, options).flags.empty());
  options.max_interval_ratio = 1.5;
  verdict = foothold::JudgeFit(outcome, options);
  REQUIRE(verdict.flags.size() == 1);
  CHECK(verdict.summary.find("of a and b disagree") != std::string::npos);

  outcome.profile.intervals[1].upper_end = foothold::ProfileEnd::kFlat;
  verdict = foothold::JudgeFit(outcome);
  REQUIRE(verdict.flags.size() == 1);
  CHECK(verdict.summary.find("b: upper end open (flat)") != std::string::npos);
  outcome.intervals = "wald";
  CHECK(foothold::JudgeFit(outcome).flags.empty());

  std::string error;
  options.max_interval_ratio = 1;
  CHECK_FALSE(options.Validate(&error));
  CHECK(error == "max_interval_ratio = 1: must be finite and > 1");
}

TEST_CASE("ProfileIntervals: foothold fit --intervals profile prints them", "[server]") {
  TempDir dir;
  const std::string data = dir.Write("peak.csv", GaussianCsv());
  const std::vector<std::string> fit{
      "fit", data, "--family", "gaussian", "--start", "height=3,center=5,sigma=0.8,baseline=0.5"};
  std::vector<std::string> json = fit;
  json.insert(json.end(), {"--intervals", "profile", "--json"});
  const CliRun run = Run(json);
  INFO(run.err);
  REQUIRE(run.code == 0);
  const Json document = Json::parse(run.out);
  CHECK(document.at("best").at("intervals") == "profile");
  const Json& sigma = document.at("best").at("parameters").at("sigma");
  REQUIRE(sigma.at("profile_interval").is_array());
  CHECK(sigma.at("profile_interval")[0].get<double>() == Approx(kScipySigmaLow).epsilon(1e-4));

  std::vector<std::string> text = fit;
  text.insert(text.end(), {"--intervals", "profile"});
  const CliRun report = Run(text);
  REQUIRE(report.code == 0);
  CHECK(report.out.find("95% profile interval") != std::string::npos);
  CHECK(report.out.find("profile (chi_square, 95%") != std::string::npos);
  CHECK(Run(fit).out.find("profile interval") == std::string::npos);

  std::vector<std::string> bad = fit;
  bad.insert(bad.end(), {"--intervals", "bootstrap"});
  const CliRun rejected = Run(bad);
  CHECK(rejected.code == foothold::kExitBadInput);
  CHECK(rejected.err.find("--intervals: 'bootstrap': expected one of wald, profile") !=
        std::string::npos);
  CHECK(Run({"fit", "--help"}).out.find("--intervals wald|profile") != std::string::npos);
}

TEST_CASE("ProfileIntervals: a request document with intervals profile gets them", "[server]") {
  Json request_document = foothold::EncodeFitRequest(GaussianRequest());
  request_document["intervals"] = "profile";
  FitRequest request;
  std::string error;
  REQUIRE(foothold::DecodeFitRequest(request_document, &request, &error));
  CHECK(request.intervals == "profile");
  const Json result = foothold::EncodeFitOutcome(Fit(request));
  CHECK(result.at("best").at("profile").at("computed") == true);
  CHECK(result.at("best").at("parameters").at("center").at("profile_interval").is_array());

  request_document["intervals"] = "likelihood";
  FitRequest bad;
  bool accepted = foothold::DecodeFitRequest(request_document, &bad, &error);
  if (accepted) accepted = bad.Validate(&error);
  CHECK_FALSE(accepted);
  CHECK(error.find("intervals = 'likelihood'") != std::string::npos);
}

TEST_CASE("ProfileIntervals: a decay seen over a tenth of its lifetime flags intervals_disagree",
          "[server]") {
  // 30 points on [0, 1.45] of 5 exp(-x/3) + 0.5 with absolute sigma 0.07: the curvature of
  // the data barely shows, so the profile of tau reaches far beyond its Wald interval.
  std::vector<double> x;
  std::vector<double> y;
  for (int i = 0; i < 30; ++i) {
    x.push_back(0.05 * i);
    y.push_back(5 * std::exp(-x.back() / 3) + 0.5 + 0.098 * std::sin(2.1 * i + 0.4));
  }
  FitRequest request;
  std::string error;
  REQUIRE(request.data.AddColumn("x", x, &error));
  REQUIRE(request.data.AddColumn("y", y, &error));
  REQUIRE(request.data.AddColumn("sigma", std::vector<double>(30, 0.07), &error));
  request.model.family = "exp_decay";
  request.start = {{"amplitude", 5}, {"tau", 3}, {"baseline", 0.5}};
  request.starts = 1;
  request.intervals = "profile";
  const FitOutcome outcome = Fit(request);
  REQUIRE(outcome.profile.is_computed);
  const foothold::ProfileInterval& tau = outcome.profile.intervals[1];
  INFO(tau.message);
  REQUIRE(tau.IsClosed());
  const double estimate = outcome.best.parameters[1];
  const double wald_upper = outcome.statistics.ci_high[1] - estimate;
  CHECK((tau.upper - estimate) / wald_upper > 2);
  CHECK(HasFlag(outcome, "intervals_disagree"));
  // The same fit with the threshold raised past every ratio raises no such flag.
  foothold::VerdictOptions lenient;
  lenient.max_interval_ratio = 10;
  const foothold::Verdict verdict = foothold::JudgeFit(outcome, lenient);
  for (const std::string& flag : verdict.flags) CHECK(flag != "intervals_disagree");
}
