// `foothold guess`: the named seeded starts of a fit, without fitting.
#include <catch2/catch.hpp>
#include <cmath>
#include <cstdio>
#include <fstream>
#include <nlohmann/json.hpp>
#include <sstream>
#include <string>

#include "server/cli.h"

namespace {

std::string WritePeakCsv() {
  const std::string path = std::string(FOOTHOLD_BINARY_DIR) + "/guess_command_peak.csv";
  std::ofstream file(path);
  file << "x,y\n";
  for (int i = 0; i <= 60; ++i) {
    const double x = 0.2 * i;
    file << x << ',' << 7.0 * std::exp(-(x - 6.0) * (x - 6.0) / (2 * 0.8 * 0.8)) + 0.5 +
                            0.03 * std::sin(5.1 * i)
         << '\n';
  }
  return path;
}

struct Run {
  int code;
  std::string out;
  std::string err;
};

Run Guess(std::vector<std::string> args) {
  std::ostringstream out, err;
  args.insert(args.begin(), "guess");
  const int code = foothold::RunCli(args, out, err);
  return {code, out.str(), err.str()};
}

}  // namespace

TEST_CASE("GuessCommand: a family's candidates are listed by name with their rss",
          "[server]") {
  const Run run = Guess({WritePeakCsv(), "--family", "gaussian", "--json"});
  INFO(run.err);
  REQUIRE(run.code == 0);
  const nlohmann::json document = nlohmann::json::parse(run.out);
  const nlohmann::json& candidates = document["candidates"];
  REQUIRE(candidates.size() >= 2);
  double previous = 0;
  for (const auto& candidate : candidates) {
    const std::string origin = candidate["origin"];
    CHECK(origin.rfind("guess:", 0) == 0);
    REQUIRE(candidate["rss"].is_number());
    CHECK(candidate["rss"].get<double>() >= previous);  // best first
    previous = candidate["rss"].get<double>();
    for (const char* name : {"height", "center", "sigma", "baseline"}) {
      CHECK(candidate["parameters"][name].is_number());
    }
  }
  // The best candidate already sits near the peak the data were made with.
  CHECK(candidates[0]["parameters"]["center"].get<double>() == Approx(6.0).margin(0.2));
}

TEST_CASE("GuessCommand: a complete user start comes first, an expression uses the generic "
          "guesser, bad input exits 2",
          "[server]") {
  const std::string data = WritePeakCsv();
  const Run user = Guess({data, "--family", "gaussian", "--start",
                          "height=5,center=5,sigma=1,baseline=0", "--json"});
  REQUIRE(user.code == 0);
  CHECK(nlohmann::json::parse(user.out)["candidates"][0]["origin"] == "user");

  const Run expression = Guess({data, "--expr", "h*exp(-(x-m)^2/(2*s^2)) + b"});
  INFO(expression.err);
  REQUIRE(expression.code == 0);
  CHECK(expression.out.find("guess:") != std::string::npos);
  CHECK(expression.out.find("rss") != std::string::npos);

  const Run bad = Guess({data, "--family", "gausian"});
  CHECK(bad.code == 2);
  CHECK(bad.err.find("unknown family 'gausian'") != std::string::npos);
  CHECK(bad.out.empty());
}
