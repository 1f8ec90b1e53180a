// End to end through the CLI: a NIST StRD problem written as CSV and an expression must
// reach the certified values from both NIST starts (certified values from the .dat file).
#include <unistd.h>

#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <sstream>

#include "server/cli.h"
#include "server/json_codec.h"

namespace fs = std::filesystem;

namespace {

constexpr double kCertifiedDigits = 6;  // log relative error required, as for StRD passes

// Log relative error of `value` against `certified`.
double Lre(double value, double certified) {
  const double relative = std::abs(value - certified) / std::abs(certified);
  return relative == 0 ? 15.0 : -std::log10(relative);
}

// The "Data: y x" block of a StRD file as CSV with columns x,y.
std::string StrdDataAsCsv(const std::string& path) {
  std::ifstream file(path);
  std::string line;
  std::ostringstream csv;
  csv << "x,y\n";
  bool in_data = false;
  while (std::getline(file, line)) {
    if (!line.empty() && line.back() == '\r') line.pop_back();
    std::istringstream fields(line);
    if (!in_data) {
      std::string first, second, third;
      fields >> first >> second >> third;
      in_data = first == "Data:" && second == "y" && third == "x";
      continue;
    }
    double y = 0;
    double x = 0;
    if (fields >> y >> x) csv << x << ',' << y << '\n';
  }
  return csv.str();
}

}  // namespace

TEST_CASE("CliNist: Misra1a through CSV and an expression reaches the certified values",
          "[server]") {
  const std::string csv_text = StrdDataAsCsv(FOOTHOLD_NIST_DIR "/Misra1a.dat");
  REQUIRE(std::count(csv_text.begin(), csv_text.end(), '\n') == 15);
  const fs::path csv =
      fs::temp_directory_path() / ("foothold-misra1a-" + std::to_string(::getpid()) + ".csv");
  std::ofstream(csv) << csv_text;
  // Certified values and standard deviations, NIST StRD Misra1a.
  const double b1 = 2.3894212918E+02, b1_sd = 2.7070075241E+00;
  const double b2 = 5.5015643181E-04, b2_sd = 7.2668688436E-06;
  for (const char* start : {"b1=500,b2=0.0001", "b1=250,b2=0.0005"}) {
    INFO("start " << start);
    std::ostringstream out, err;
    const int code = foothold::RunCli(
        {"fit", csv.string(), "--expr", "b1*(1-exp(-b2*x))", "--start", start, "--json"}, out, err);
    INFO(err.str());
    REQUIRE(code == foothold::kExitOk);
    const foothold::Json best = foothold::Json::parse(out.str())["best"];
    CHECK(Lre(best["parameters"]["b1"]["value"].get<double>(), b1) >= kCertifiedDigits);
    CHECK(Lre(best["parameters"]["b2"]["value"].get<double>(), b2) >= kCertifiedDigits);
    CHECK(Lre(best["parameters"]["b1"]["stderr"].get<double>(), b1_sd) >= kCertifiedDigits);
    CHECK(Lre(best["parameters"]["b2"]["stderr"].get<double>(), b2_sd) >= kCertifiedDigits);
    CHECK(Lre(best["rss"].get<double>(), 1.2455138894E-01) >= kCertifiedDigits);
  }
  std::error_code ignored;
  fs::remove(csv, ignored);
}
