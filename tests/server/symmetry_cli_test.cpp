// Basins are compared modulo the model's symmetries (DESIGN.md §2): a 3-peak multi_gaussian
// fit through the CLI must report the optimum reached with the peaks in any order as one
// basin, in center order, with no second basin within the ambiguity gap.

#include <unistd.h>

#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <cstdint>
#include <filesystem>
#include <fstream>
#include <set>
#include <sstream>
#include <string>
#include <vector>

#include "server/cli.h"
#include "server/json_codec.h"

namespace fs = std::filesystem;

namespace {

constexpr int kNumPeaks = 3;
// The multistart driver's default ambiguity gap (MultistartOptions::ambiguity_chi2_gap), in
// chi-square units; unweighted data, so delta rss * dof / best rss is compared with it.
constexpr double kAmbiguityChi2Gap = 1.0;
// How close the fitted centers must come to the generating ones, relative to the x range.
constexpr double kCenterTolerance = 0.01;

struct Peak {
  double height, center, sigma;
};
// Three peaks, the tallest in the middle, the narrowest last; baseline 1.
const Peak kPeaks[kNumPeaks] = {{5.0, 2.0, 0.4}, {8.0, 5.0, 0.5}, {3.0, 7.5, 0.3}};
constexpr double kBaseline = 1.0;
constexpr double kNoise = 0.05;
constexpr double kXRange = 10.0;

// Deterministic noise in [-1, 1] from a 64-bit linear congruential generator (Knuth's MMIX
// constants), independent of the standard library's distributions.
class Noise {
 public:
  double Next() {
    state_ = state_ * 6364136223846793005ULL + 1442695040888963407ULL;
    return static_cast<double>(state_ >> 11) / static_cast<double>(1ULL << 52) - 1.0;
  }

 private:
  std::uint64_t state_ = 2024;
};

std::string ThreePeaksCsv() {
  Noise noise;
  std::ostringstream csv;
  csv.precision(17);
  csv << "x,y\n";
  for (int i = 0; i <= 200; ++i) {
    const double x = kXRange * i / 200;
    double y = kBaseline + kNoise * noise.Next();
    for (const Peak& p : kPeaks) {
      y += p.height * std::exp(-0.5 * std::pow((x - p.center) / p.sigma, 2));
    }
    csv << x << ',' << y << '\n';
  }
  return csv.str();
}

std::vector<double> Centers(const foothold::Json& values, bool is_nested) {
  std::vector<double> centers;
  for (int k = 1; k <= kNumPeaks; ++k) {
    const foothold::Json& entry = values["center" + std::to_string(k)];
    centers.push_back(is_nested ? entry["value"].get<double>() : entry.get<double>());
  }
  return centers;
}

// The order of the peaks in an end point: the rank of each peak's center.
std::vector<int> CenterOrder(const std::vector<double>& centers) {
  std::vector<int> order(centers.size());
  for (size_t k = 0; k < centers.size(); ++k) {
    order[k] = static_cast<int>(
        std::count_if(centers.begin(), centers.end(), [&](double c) { return c < centers[k]; }));
  }
  return order;
}

}  // namespace

TEST_CASE("SymmetryCli: permuted 3-peak multi_gaussian optima are one basin in center order",
          "[server]") {
  const fs::path csv =
      fs::temp_directory_path() / ("foothold-symmetry-" + std::to_string(::getpid()) + ".csv");
  std::ofstream(csv) << ThreePeaksCsv();
  std::ostringstream out, err;
  const int code = foothold::RunCli({"fit", csv.string(), "--family", "multi_gaussian", "--peaks",
                                     "3", "--starts", "48", "--threads", "2", "--json"},
                                    out, err);
  std::error_code ignored;
  fs::remove(csv, ignored);
  INFO(err.str());
  REQUIRE(code == foothold::kExitOk);
  const foothold::Json document = foothold::Json::parse(out.str());
  const foothold::Json& basins = document["basins"];
  REQUIRE(!basins.empty());
  const foothold::Json& best_basin = basins[0];
  INFO("best basin: " << best_basin.dump());

  // One basin holds several starts, and its peaks are in center order at the generating values.
  CHECK(best_basin["starts"].get<int>() > 1);
  const std::vector<double> centers = Centers(best_basin["parameters"], true);
  CHECK(std::is_sorted(centers.begin(), centers.end()));
  for (int k = 0; k < kNumPeaks; ++k) {
    CHECK(std::abs(centers[k] - kPeaks[k].center) <= kCenterTolerance * kXRange);
  }
  const std::vector<double> best_centers = Centers(document["best"]["parameters"], true);
  CHECK(std::is_sorted(best_centers.begin(), best_centers.end()));

  // The starts of the best basin ended with the peaks in more than one order: the basin is
  // the permuted optima merged, not one order found repeatedly.
  std::set<std::vector<int>> orders;
  for (const foothold::Json& start : document["starts"]) {
    if (start["basin"].is_number() && start["basin"].get<int>() == best_basin["id"].get<int>()) {
      orders.insert(CenterOrder(Centers(start["end"], false)));
    }
  }
  CHECK(orders.size() > 1);

  // No other basin within the ambiguity gap, and no ambiguity flag.
  const double best_rss = best_basin["rss"].get<double>();
  const double dof = document["best"]["dof"].get<double>();
  for (size_t b = 1; b < basins.size(); ++b) {
    INFO("basin " << b << ": " << basins[b].dump());
    CHECK(basins[b]["delta_rss"].get<double>() * dof / best_rss >= kAmbiguityChi2Gap);
  }
  const std::vector<std::string> flags = document["verdict"]["flags"];
  CHECK(std::find(flags.begin(), flags.end(), "ambiguous_basins") == flags.end());
}
