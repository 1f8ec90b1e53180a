// The real foothold binary with --loss, --loss-scale and --method: the JSON names the loss,
// its scale (given or automatic), the method and the outliers, the start log says which
// method ran each start, and bad values exit 2 with one line naming the option.
#include <sys/wait.h>
#include <unistd.h>

#include <catch2/catch.hpp>
#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <nlohmann/json.hpp>
#include <sstream>
#include <string>

namespace fs = std::filesystem;
using nlohmann::json;

namespace {

const std::string kBinary = FOOTHOLD_BINARY_DIR "/server/foothold";

// The clean line is y = 2x + 1; a robust fit lands within these of it (the wiggle of +-0.1
// moves least squares on the clean points by about 0.01 in slope and 0.06 in intercept,
// measured), least squares on the contaminated data misses the intercept by more.
constexpr double kSlopeTolerance = 0.02;
constexpr double kInterceptTolerance = 0.2;
// The decay is exact to 6 digits: every method must land on it.
constexpr double kDecayTolerance = 1e-4;

struct Run {
  int exit_code = -1;
  std::string out;
  std::string err;
};

std::string ReadAll(const fs::path& path) {
  std::ifstream file(path);
  std::ostringstream text;
  text << file.rdbuf();
  return text.str();
}

class CliMethods {
 public:
  CliMethods()
      : dir_(fs::temp_directory_path() / ("foothold-methods-" + std::to_string(getpid()))) {
    fs::create_directories(dir_);
    std::ofstream line(Line());
    line << "x,y\n";
    for (int i = 0; i < 20; ++i) {
      double y = 2.0 * i + 1.0 + 0.1 * std::sin(5.1 * i * i);
      if (i == 3) y += 15;  // the two gross outliers, rows 3 and 12 of the data
      if (i == 12) y -= 12;
      line << i << ',' << y << '\n';
    }
    std::ofstream decay(Decay());
    decay << "x,y\n";
    for (int i = 0; i < 30; ++i) {
      const double x = 0.25 * i;
      decay << x << ',' << 8.0 * std::exp(-x / 1.5) + 0.5 + 1e-6 * std::cos(7.0 * i) << '\n';
    }
  }
  ~CliMethods() {
    std::error_code ignored;
    fs::remove_all(dir_, ignored);
  }
  std::string Line() const { return (dir_ / "line.csv").string(); }
  std::string Decay() const { return (dir_ / "decay.csv").string(); }

  Run Fit(const std::string& arguments) const {
    const std::string out = (dir_ / "out.txt").string();
    const std::string err = (dir_ / "err.txt").string();
    const int status =
        std::system((kBinary + " fit " + arguments + " >" + out + " 2>" + err).c_str());
    Run run;
    run.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
    run.out = ReadAll(out);
    run.err = ReadAll(err);
    return run;
  }

  json FitJson(const std::string& arguments) const {
    const Run run = Fit(arguments + " --json");
    INFO(arguments << "\nstderr: " << run.err);
    REQUIRE(run.exit_code == 0);
    return json::parse(run.out);
  }

 private:
  fs::path dir_;
};

double Value(const json& result, const std::string& name) {
  return result["best"]["parameters"][name]["value"].get<double>();
}

TEST_CASE("CliMethods: fit refuses a request document that asks for a comparison", "[server]") {
  REQUIRE(fs::exists(kBinary));
  const CliMethods cli;
  const std::string path = (fs::path(cli.Line()).parent_path() / "compare.json").string();
  {
    std::ofstream request(path);
    request << R"({"compare": ["line", "polynomial"], "data": {"x": [0, 1, 2, 3, 4, 5],
                  "y": [1, 3.1, 4.9, 7.2, 9.0, 10.8]}})";
  }
  const Run run = cli.Fit("--request " + path);
  CHECK(run.exit_code == 2);
  CHECK(run.out.empty());
  CHECK(run.err.find("foothold: compare: fit runs one model; use foothold compare") == 0);
}

}  // namespace

TEST_CASE("CliMethods: every --loss reports its scale and the two outliers", "[server]") {
  REQUIRE(fs::exists(kBinary));
  const CliMethods cli;
  const json plain = cli.FitJson(cli.Line() + " --family line");
  CHECK(plain["best"]["loss"] == "squared");
  CHECK(plain["best"]["loss_scale"].is_null());
  CHECK(plain["outliers"]["count"] == 0);
  CHECK(std::abs(Value(plain, "intercept") - 1) > kInterceptTolerance);

  for (const char* loss : {"huber", "soft_l1", "cauchy", "tukey", "l1"}) {
    INFO("--loss " << loss);
    const json automatic = cli.FitJson(cli.Line() + " --family line --loss " + loss);
    CHECK(automatic["best"]["loss"] == loss);
    CHECK(automatic["best"]["loss_scale_automatic"] == true);
    CHECK(automatic["best"]["loss_scale"].get<double>() > 0);
    CHECK(automatic["outliers"]["indices"] == json::array({3, 12}));
    CHECK(std::abs(Value(automatic, "slope") - 2) < kSlopeTolerance);
    CHECK(std::abs(Value(automatic, "intercept") - 1) < kInterceptTolerance);
    // The start log says how each start was reweighted.
    CHECK(automatic["starts"][0]["message"].get<std::string>().find(std::string(loss) + " loss") !=
          std::string::npos);

    const json given =
        cli.FitJson(cli.Line() + " --family line --loss " + loss + " --loss-scale 0.5");
    CHECK(given["best"]["loss_scale"] == 0.5);
    CHECK(given["best"]["loss_scale_automatic"] == false);
    CHECK(given["outliers"]["indices"] == json::array({3, 12}));
  }
}

TEST_CASE("CliMethods: every --method reaches the decay and names itself in the start log",
          "[server]") {
  REQUIRE(fs::exists(kBinary));
  const CliMethods cli;
  // lm runs exp_decay by variable projection (its linear amplitude and baseline projected
  // out, engine/solve/local_fit.h); the other methods work on all parameters.
  const std::pair<const char*, const char*> methods[] = {
      {"lm", "variable projection"}, {"gauss_newton", "gauss-newton"}, {"bfgs", "bfgs"}};
  for (const auto& [method, log_name] : methods) {
    INFO("--method " << method);
    const json result =
        cli.FitJson(cli.Decay() + " --family exp_decay --starts 4 --method " + method);
    CHECK(result["best"]["method"] == method);
    CHECK(result["best"]["loss"] == "squared");
    CHECK(std::abs(Value(result, "tau") - 1.5) < kDecayTolerance);
    CHECK(std::abs(Value(result, "amplitude") - 8) < kDecayTolerance);
    REQUIRE(result["starts"].size() >= 1);
    for (const json& start : result["starts"]) {
      CHECK(start["message"].get<std::string>().rfind(std::string(log_name) + ":", 0) == 0);
    }
  }
  // Without projection (a robust loss reweights the full problem) lm names itself.
  const json robust_lm = cli.FitJson(cli.Line() + " --family line --loss huber --method lm");
  CHECK(robust_lm["starts"][0]["message"].get<std::string>().rfind("levenberg-marquardt:", 0) == 0);
  // A robust loss with a method other than lm: both are recorded.
  const json both = cli.FitJson(cli.Line() + " --family line --loss cauchy --method gauss_newton");
  CHECK(both["best"]["loss"] == "cauchy");
  CHECK(both["best"]["method"] == "gauss_newton");
  CHECK(both["outliers"]["indices"] == json::array({3, 12}));
}

TEST_CASE("CliMethods: bad --loss, --loss-scale and --method exit 2 naming the option",
          "[server]") {
  REQUIRE(fs::exists(kBinary));
  const CliMethods cli;
  const std::pair<std::string, std::string> cases[] = {
      {"--loss bogus",
       "--loss: 'bogus': expected one of squared, soft_l1, huber, cauchy, tukey, l1"},
      {"--loss", "--loss: missing value"},
      {"--method newton", "--method: 'newton': expected one of lm, gauss_newton, bfgs"},
      {"--method", "--method: missing value"},
      {"--loss huber --loss-scale abc", "--loss-scale: 'abc' is not a number"},
      {"--loss huber --loss-scale inf", "--loss-scale: 'inf' is not a finite number"},
      {"--loss huber --loss-scale", "--loss-scale: missing value"},
  };
  for (const auto& [flags, message] : cases) {
    INFO(flags);
    const Run run = cli.Fit(cli.Line() + " --family line " + flags);
    CHECK(run.exit_code == 2);
    CHECK(run.out.empty());
    CHECK(run.err == "foothold: " + message + "\n");
  }
}
