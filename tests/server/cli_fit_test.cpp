// `foothold fit` and `foothold families` run in-process: every bad input exits 2 with one
// line naming the problem; good inputs fit, print and exit 0; a fit that runs out of
// iterations exits 3.
#include <unistd.h>

#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <sstream>

#include "server/cli.h"
#include "server/json_codec.h"
#include "tests/server/temp_dir.h"

namespace fs = std::filesystem;
using foothold::Json;
using foothold::RunCli;

namespace {

struct CliRun {
  int code = -1;
  std::string out;
  std::string err;
};

CliRun Run(const std::vector<std::string>& args) {
  std::ostringstream out;
  std::ostringstream err;
  CliRun run;
  run.code = RunCli(args, out, err);
  run.out = out.str();
  run.err = err.str();
  return run;
}

// A scratch folder per test case, removed afterwards.
class TempDir : public foothold::testing::TempDir {
 public:
  TempDir() : foothold::testing::TempDir("foothold-cli-test") {}
};

// A gaussian peak (height 10, center 5, sigma 1.2, baseline 1) with small deterministic
// wiggles standing in for noise, so the fit has a non-zero residual.
std::string GaussianCsv(bool with_sigma = false) {
  std::ostringstream csv;
  csv << (with_sigma ? "x,y,sigma\n" : "x,y\n");
  for (int i = 0; i <= 40; ++i) {
    const double x = 0.25 * i;
    const double y =
        10.0 * std::exp(-(x - 5.0) * (x - 5.0) / (2 * 1.2 * 1.2)) + 1.0 + 0.05 * std::sin(7.3 * i);
    csv << x << ',' << y;
    if (with_sigma) csv << ",0.05";
    csv << '\n';
  }
  return csv.str();
}

const std::vector<std::string> kGaussianStart{"--family", "gaussian", "--start",
                                              "height=8,center=4.5,sigma=1,baseline=0.5"};

std::vector<std::string> FitArgs(const std::string& data, std::vector<std::string> more) {
  std::vector<std::string> args{"fit", data};
  args.insert(args.end(), more.begin(), more.end());
  return args;
}

// Exit 2, nothing on stdout, exactly one line on stderr that contains `needle`.
void CheckBadInput(const CliRun& run, const std::string& needle) {
  INFO("stderr: " << run.err);
  CHECK(run.code == foothold::kExitBadInput);
  CHECK(run.out.empty());
  CHECK(run.err.rfind("foothold: ", 0) == 0);
  CHECK(std::count(run.err.begin(), run.err.end(), '\n') == 1);
  CHECK(run.err.find(needle) != std::string::npos);
}

}  // namespace

TEST_CASE("Cli: bad data files exit 2 naming the problem", "[server]") {
  TempDir dir;
  CheckBadInput(Run(FitArgs(dir.Path("absent.csv"), kGaussianStart)),
                "cannot open '" + dir.Path("absent.csv") + "'");
  CheckBadInput(Run(FitArgs(dir.Write("empty.csv", ""), kGaussianStart)), "the file is empty");
  CheckBadInput(Run(FitArgs(dir.Write("noy.csv", "x,z\n1,2\n2,3\n"), kGaussianStart)),
                "response: the data have no column 'y' (columns: x, z)");
  CheckBadInput(Run(FitArgs(dir.Write("ragged.csv", "x,y,z\n1,2,3\n4,5,6\n7,8\n"), kGaussianStart)),
                "row 4 has 2 fields but the header has 3");
  CheckBadInput(Run(FitArgs(dir.Write("text.csv", "x,y\n1,2\n2,3\n3,4\n4,five\n"), kGaussianStart)),
                "row 5, column 'y': 'five' is not a number");
  CheckBadInput(Run(FitArgs(dir.Write("nan.csv", "x,y\n1,2\n2,NaN\n"), kGaussianStart)),
                "row 3, column 'y': 'NaN' is not a finite number");
  CheckBadInput(
      Run(FitArgs(dir.Write("inf.json", R"({"x": [1, 2], "y": [1, "Inf"]})"), kGaussianStart)),
      "data.y[1]: expected a finite number, got \"Inf\"");
  const std::string sigma = dir.Write("sigma.csv", "x,y,sigma\n1,2,1\n2,3,1\n3,4,-0.5\n");
  CheckBadInput(Run(FitArgs(sigma, {"--family", "line", "--start", "slope=1,intercept=0"})),
                sigma + ": row 4, column 'sigma': sigma -0.5 is not > 0");
}

TEST_CASE("Cli: bad model and parameter choices exit 2 naming the problem", "[server]") {
  TempDir dir;
  const std::string data = dir.Write("peak.csv", GaussianCsv());
  CheckBadInput(Run(FitArgs(dir.Write("few.csv", "x,y\n1,2\n2,3\n3,3\n"), kGaussianStart)),
                "data: 3 points but the model has 4 free parameters; need at least 4 points");
  CheckBadInput(Run(FitArgs(data, {"--family", "gausian"})), "unknown family 'gausian'");
  CheckBadInput(Run(FitArgs(data, {"--expr", "a*exp(-(x-b)^2", "--start", "a=1,b=1"})),
                "model.expression: position ");
  CheckBadInput(Run(FitArgs(data, {"--family", "gaussian", "--start", "hieght=1"})),
                "start: unknown parameter 'hieght' (the model's parameters: height, center, "
                "sigma, baseline)");
  CheckBadInput(Run(FitArgs(data, {"--family", "gaussian", "--fix", "base=0"})),
                "fix: unknown parameter 'base'");
  CheckBadInput(Run(FitArgs(data, {"--family", "gaussian", "--bounds", "width=0:1"})),
                "bounds: unknown parameter 'width'");
  std::vector<std::string> reversed = kGaussianStart;
  reversed.insert(reversed.end(), {"--bounds", "center=6:2"});
  CheckBadInput(Run(FitArgs(data, reversed)), "bounds.center: lower 6 > upper 2");
  std::vector<std::string> outside = kGaussianStart;
  outside.insert(outside.end(), {"--bounds", "center=6:9"});
  CheckBadInput(Run(FitArgs(data, outside)), "start.center = 4.5 is outside its bounds [6, 9]");
}

TEST_CASE("Cli: an expression without a full start is completed by the generic guesser",
          "[server]") {
  TempDir dir;
  const std::string data = dir.Write("peak.csv", GaussianCsv());
  const CliRun run = Run(FitArgs(data, {"--expr", "h*exp(-(x-m)^2/(2*s^2)) + b", "--start", "h=8",
                                        "--bounds", "s=0.01:10", "--json"}));
  INFO(run.err);
  REQUIRE(run.code == foothold::kExitOk);
  const Json document = Json::parse(run.out);
  CHECK(document["guessed"] == Json::array({"m", "s", "b"}));
  CHECK(document["best"]["parameters"]["m"]["value"].get<double>() == Approx(5.0).margin(0.05));
}

TEST_CASE("Cli: unknown flags, missing values and unknown commands exit 2", "[server]") {
  TempDir dir;
  const std::string data = dir.Write("peak.csv", GaussianCsv());
  CheckBadInput(Run(FitArgs(data, {"--family", "gaussian", "--colour", "red"})),
                "unknown flag '--colour'");
  CheckBadInput(Run(FitArgs(data, {"--family"})), "--family: missing value");
  CheckBadInput(Run(FitArgs(data, {"--family", "line", "--degree", "two"})),
                "--degree: 'two' is not an integer");
  CheckBadInput(Run(FitArgs(data, {"--family", "line", "--start", "slope"})),
                "--start: 'slope' is not of the form name=value");
  CheckBadInput(Run({"fit", "--family", "line"}), "no data");
  CheckBadInput(Run({"fitt"}), "unknown command 'fitt'");
  CheckBadInput(Run({}), "no command given");
  std::vector<std::string> later = kGaussianStart;
  later.insert(later.end(), {"--loss", "quartic"});
  CheckBadInput(Run(FitArgs(data, later)),
                "--loss: 'quartic': expected one of squared, soft_l1, huber, cauchy, tukey, l1");
}

TEST_CASE("Cli: a request document with a bad field exits 2 naming it", "[server]") {
  TempDir dir;
  const std::string request =
      dir.Write("request.json",
                R"({"model": {"family": "gaussian"}, "data": {"x": [1, 2, 3], "y": [1, 2, "x"]}})");
  CheckBadInput(Run({"fit", "--request", request}),
                "request.json: data.y[2]: expected a finite number, got \"x\"");
  const std::string bounds =
      dir.Write("bounds.json", R"({"model": {"family": "line"}, "bounds": {"slope": [5, 2]}})");
  CheckBadInput(Run({"fit", "--request", bounds}), "bounds.slope: lower 5 > upper 2");
}

TEST_CASE("Cli: a gaussian family fit prints the parameter table", "[server]") {
  TempDir dir;
  const CliRun run = Run(FitArgs(dir.Write("peak.csv", GaussianCsv()), kGaussianStart));
  INFO(run.err);
  REQUIRE(run.code == foothold::kExitOk);
  CHECK(run.err.empty());
  for (const char* text : {"parameter", "std. error", "95% interval", "height", "center", "sigma",
                           "baseline", "reduced chi-square", "R^2", "RMSE", "AICc", "Durbin-Watson",
                           "runs test p", "condition number", "termination", "verdict:"}) {
    INFO(text);
    CHECK(run.out.find(text) != std::string::npos);
  }
  // The center row carries the fitted value, close to the true 5.
  const size_t row = run.out.find("\ncenter");
  REQUIRE(row != std::string::npos);
  std::istringstream fields(run.out.substr(row + 1));
  std::string name;
  double center = 0;
  fields >> name >> center;
  CHECK(center == Approx(5.0).margin(0.02));
}

TEST_CASE("Cli: --json prints a result document with every key", "[server]") {
  TempDir dir;
  std::vector<std::string> args = kGaussianStart;
  args.insert(args.end(), {"--json", "--seed", "7", "--label", "peak-1"});
  const CliRun run = Run(FitArgs(dir.Write("peak.csv", GaussianCsv(true)), args));
  REQUIRE(run.code == foothold::kExitOk);
  const Json document = Json::parse(run.out);
  for (const char* key : {"model", "best", "basins", "starts", "verdict", "seed", "elapsed_ms"}) {
    INFO(key);
    CHECK(document.contains(key));
  }
  const Json& best = document["best"];
  for (const char* key : {"parameters", "rss", "dof", "reduced_chi2", "r2", "aic", "bic",
                          "termination", "iterations", "evaluations"}) {
    INFO(key);
    CHECK(best.contains(key));
  }
  CHECK(best["parameters"]["sigma"]["value"].get<double>() == Approx(1.2).margin(0.02));
  CHECK(document["sigma_column"] == "sigma");
  CHECK(document["sigma_mode"] == "absolute");
  CHECK(document["seed"] == 7);
  CHECK(document["label"] == "peak-1");
  CHECK(document["starts"][0]["origin"] == "user");
}

TEST_CASE("Cli: an expression fit reads two predictor columns", "[server]") {
  TempDir dir;
  std::ostringstream csv;
  csv << "t,dose,y\n";
  for (int i = 0; i < 30; ++i) {
    const double t = 0.5 * i;
    const double dose = 1.0 + (i % 5);
    csv << t << ',' << dose << ','
        << 3.0 * dose * std::exp(-t / 4.0) + 0.5 + 0.01 * std::cos(3.1 * i) << '\n';
  }
  const CliRun run = Run(FitArgs(dir.Write("decay.csv", csv.str()),
                                 {"--expr", "a*dose*exp(-t/tau) + b", "--params", "a,tau,b",
                                  "--start", "a=1,tau=2,b=0", "--bounds", "tau=0:", "--json"}));
  INFO(run.err);
  REQUIRE(run.code == foothold::kExitOk);
  const Json document = Json::parse(run.out);
  CHECK(document["model"]["expression"] == "a*dose*exp(-t/tau) + b");
  CHECK(document["model"]["parameters"] == Json::array({"a", "tau", "b"}));
  CHECK(document["predictors"].size() == 2);
  CHECK(document["best"]["parameters"]["a"]["value"].get<double>() == Approx(3.0).margin(0.01));
  CHECK(document["best"]["parameters"]["tau"]["value"].get<double>() == Approx(4.0).margin(0.02));
}

TEST_CASE("Cli: a transformed response is fitted", "[server]") {
  TempDir dir;
  std::ostringstream csv;
  csv << "x,y\n";
  for (int i = 1; i <= 12; ++i) csv << i << ',' << 2.0 * std::exp(0.3 * i) << '\n';
  const CliRun run = Run(
      FitArgs(dir.Write("growth.csv", csv.str()),
              {"--family", "line", "--y", "log(y)", "--start", "slope=0,intercept=0", "--json"}));
  INFO(run.err);
  REQUIRE(run.code == foothold::kExitOk);
  const Json document = Json::parse(run.out);
  CHECK(document["best"]["parameters"]["slope"]["value"].get<double>() == Approx(0.3));
  CHECK(document["best"]["parameters"]["intercept"]["value"].get<double>() ==
        Approx(std::log(2.0)));
}

TEST_CASE("Cli: a response expression that is not finite names the file row", "[server]") {
  TempDir dir;
  const std::string data = dir.Write("low.csv", "x,y\n1,2\n2,-3\n3,4\n");
  CheckBadInput(
      Run(FitArgs(data, {"--family", "line", "--y", "log(y)", "--start", "slope=0,intercept=0"})),
      "response 'log(y)': " + data + ": row 3");
}

TEST_CASE("Cli: a request document fits and DATA overrides its data", "[server]") {
  TempDir dir;
  const std::string request =
      dir.Write("request.json",
                R"({"model": {"family": "gaussian"}, "data": {"x": [0, 1], "y": [1, 2]},
          "start": {"height": 8, "center": 4.5, "sigma": 1, "baseline": 0.5}})");
  const CliRun run =
      Run({"fit", dir.Write("peak.csv", GaussianCsv()), "--request", request, "--json"});
  INFO(run.err);
  REQUIRE(run.code == foothold::kExitOk);
  CHECK(Json::parse(run.out)["best"]["dof"] == 37);
}

TEST_CASE("Cli: a fit that runs out of iterations exits 3 and still prints", "[server]") {
  TempDir dir;
  std::vector<std::string> args = kGaussianStart;
  args.insert(args.end(), {"--max-iterations", "1", "--starts", "1", "--json"});
  const CliRun run = Run(FitArgs(dir.Write("peak.csv", GaussianCsv()), args));
  REQUIRE(run.code == foothold::kExitNotConverged);
  const Json document = Json::parse(run.out);
  CHECK(document["best"]["termination"] == "iteration_limit");
  CHECK(document["starts"][0]["converged"] == false);
  CHECK(document["starts"][0]["basin"].is_null());
  CHECK(document["basins"].empty());
  CHECK(document["verdict"]["flags"][0] == "not_converged");
}

TEST_CASE("Cli: families lists the catalogue and help documents every flag", "[server]") {
  const CliRun table = Run({"families"});
  REQUIRE(table.code == foothold::kExitOk);
  CHECK(table.out.find("gaussian") != std::string::npos);
  CHECK(table.out.find("height, center, sigma, baseline") != std::string::npos);
  const CliRun json = Run({"families", "--json"});
  REQUIRE(json.code == foothold::kExitOk);
  CHECK(Json::parse(json.out)["families"].size() >= 19);
  const CliRun help = Run({"fit", "--help"});
  REQUIRE(help.code == foothold::kExitOk);
  for (const char* flag : {"--family",
                           "--degree",
                           "--peaks",
                           "--expr",
                           "--params",
                           "--start",
                           "--fix",
                           "--bounds",
                           "--y",
                           "--sigma-column",
                           "--sigma ",
                           "--request",
                           "--json",
                           "--label",
                           "--loss",
                           "--method",
                           "--starts",
                           "--seed",
                           "--threads",
                           "--deadline",
                           "--max-iterations",
                           "--max-evaluations"}) {
    INFO(flag);
    CHECK(help.out.find(flag) != std::string::npos);
  }
  CHECK(Run({"--help"}).out.find("families") != std::string::npos);
}

namespace {

// A stream buffer that accepts `capacity` characters and then fails, like a closed pipe.
class FailingBuffer : public std::streambuf {
 public:
  explicit FailingBuffer(int capacity) : remaining_(capacity) {}

 protected:
  int_type overflow(int_type c) override {
    if (remaining_ <= 0) return traits_type::eof();
    --remaining_;
    return c;
  }

 private:
  int remaining_;
};

}  // namespace

TEST_CASE("Cli: a result that cannot be written exits 1", "[server]") {
  TempDir dir;
  const std::string data = dir.Write("peak.csv", GaussianCsv());
  for (int capacity : {0, 100}) {
    FailingBuffer buffer(capacity);
    std::ostream out(&buffer);
    std::ostringstream err;
    INFO("capacity " << capacity);
    CHECK(RunCli(FitArgs(data, kGaussianStart), out, err) == foothold::kExitOutputFailed);
    CHECK(err.str() == "foothold: writing the result failed\n");
  }
}

TEST_CASE("Cli: a family fit without starts uses the guesser", "[server]") {
  TempDir dir;
  const std::string data = dir.Write("peak.csv", GaussianCsv());
  const CliRun guessed = Run(FitArgs(data, {"--family", "gaussian", "--json"}));
  INFO(guessed.err);
  REQUIRE(guessed.code == foothold::kExitOk);
  const Json document = Json::parse(guessed.out);
  CHECK(document["starts"][0]["origin"].get<std::string>().rfind("guess:", 0) == 0);
  CHECK(document["guessed"] == Json::array({"height", "center", "sigma", "baseline"}));
  CHECK(document["best"]["parameters"]["center"]["value"].get<double>() ==
        Approx(5.0).margin(0.02));

  const CliRun partial =
      Run(FitArgs(data, {"--family", "gaussian", "--start", "center=4.5", "--json"}));
  REQUIRE(partial.code == foothold::kExitOk);
  const Json mixed = Json::parse(partial.out);
  CHECK(mixed["guessed"] == Json::array({"height", "sigma", "baseline"}));
  CHECK(mixed["starts"][0]["start"]["center"] == 4.5);

  const CliRun table = Run(FitArgs(data, {"--family", "gaussian"}));
  REQUIRE(table.code == foothold::kExitOk);
  CHECK(table.out.find("guessed from the data") != std::string::npos);
}

TEST_CASE("Cli: peaks auto chooses the peak count from the data", "[server]") {
  TempDir dir;
  std::ostringstream csv;
  csv << "x,y\n";
  for (int i = 0; i <= 120; ++i) {
    const double x = 0.1 * i;
    const double y = 8.0 * std::exp(-(x - 4.0) * (x - 4.0) / (2 * 0.5 * 0.5)) +
                     5.0 * std::exp(-(x - 8.0) * (x - 8.0) / (2 * 0.7 * 0.7)) + 0.5 +
                     0.02 * std::sin(5.1 * i);
    csv << x << ',' << y << '\n';
  }
  const CliRun run = Run(FitArgs(dir.Write("two.csv", csv.str()),
                                 {"--family", "multi_gaussian", "--peaks", "auto", "--json"}));
  INFO(run.err);
  REQUIRE(run.code == foothold::kExitOk);
  const Json document = Json::parse(run.out);
  CHECK(document["model"]["peaks"] == 2);
  CHECK(document["model"]["auto_peaks"] == true);
  CHECK(document["best"]["parameters"].size() == 7);
}
