// The same request with the same seed gives the same result document whatever the thread
// count (DESIGN.md §2, multistart): `foothold fit ... --json` run in-process (RunCli) with
// --threads 1, 2 and 8 must print identical JSON once wall times (elapsed_ms and every
// "seconds") are removed.

#include <unistd.h>

#include <catch2/catch.hpp>
#include <cmath>
#include <cstdint>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

#include "server/cli.h"
#include "server/json_codec.h"

namespace fs = std::filesystem;

namespace {

const std::vector<std::string> kThreadCounts = {"1", "2", "8"};
// The family case must find several basins, so that basin order and ids are compared too.
constexpr size_t kMinFamilyBasins = 2;

// Removes wall-clock figures, which differ from run to run, at every depth.
void RemoveTimes(foothold::Json* node) {
  if (node->is_object()) {
    node->erase("elapsed_ms");
    node->erase("seconds");
    for (auto& item : node->items()) RemoveTimes(&item.value());
  } else if (node->is_array()) {
    for (auto& element : *node) RemoveTimes(&element);
  }
}

// Deterministic noise in [-1, 1] from a 64-bit linear congruential generator (Knuth's MMIX
// constants), so the generated data do not depend on the standard library's distributions.
class Noise {
 public:
  double Next() {
    state_ = state_ * 6364136223846793005ULL + 1442695040888963407ULL;
    return static_cast<double>(state_ >> 11) / static_cast<double>(1ULL << 52) - 1.0;
  }

 private:
  std::uint64_t state_ = 12345;
};

// Three separated gaussian peaks on a constant baseline, written as CSV.
std::string ThreePeaksCsv() {
  struct Peak {
    double height, center, sigma;
  };
  const Peak peaks[] = {{5.0, 2.0, 0.4}, {8.0, 5.0, 0.5}, {3.0, 7.5, 0.3}};
  constexpr double kBaseline = 1.0;
  constexpr double kNoise = 0.05;
  Noise noise;
  std::ostringstream csv;
  csv.precision(17);
  csv << "x,y\n";
  for (int i = 0; i <= 200; ++i) {
    const double x = 0.05 * i;
    double y = kBaseline + kNoise * noise.Next();
    for (const Peak& p : peaks) {
      y += p.height * std::exp(-0.5 * std::pow((x - p.center) / p.sigma, 2));
    }
    csv << x << ',' << y << '\n';
  }
  return csv.str();
}

fs::path WriteTemp(const std::string& name, const std::string& text) {
  const fs::path path =
      fs::temp_directory_path() / ("foothold-" + std::to_string(::getpid()) + "-" + name);
  std::ofstream(path) << text;
  return path;
}

// Runs the fit once per thread count and compares the documents without times.
// `min_basins` is how many basins the search must find for the case to test what it names.
void CheckSameForEveryThreadCount(std::vector<std::string> args, size_t min_basins = 1) {
  std::string reference;
  for (const std::string& threads : kThreadCounts) {
    std::vector<std::string> with_threads = args;
    with_threads.insert(with_threads.end(), {"--threads", threads, "--json"});
    std::ostringstream out, err;
    const int code = foothold::RunCli(with_threads, out, err);
    INFO("threads " << threads << ": " << err.str());
    REQUIRE(code == foothold::kExitOk);
    foothold::Json document = foothold::Json::parse(out.str());
    REQUIRE(document["starts"].size() > 1);
    CHECK(document["basins"].size() >= min_basins);
    RemoveTimes(&document);
    const std::string text = document.dump(1);
    if (reference.empty()) {
      reference = text;
    } else {
      CHECK(text == reference);
    }
  }
}

}  // namespace

TEST_CASE("Determinism: a family fit with several basins is the same for 1, 2 and 8 threads",
          "[server]") {
  // An undamped sine fitted to the ring-down: frequency leaves distinct local optima. (The
  // damped_sine fit of the same file now ends in one basin: its former 12 were sign and
  // phase twins of one curve, folded by the model's canonical form.)
  CheckSameForEveryThreadCount({"fit", FOOTHOLD_SOURCE_DIR "/docs/examples/ringdown_cantilever.csv",
                                "--family", "sine", "--starts", "32"},
                               kMinFamilyBasins);
}

TEST_CASE("Determinism: an expression fit is the same for 1, 2 and 8 threads", "[server]") {
  CheckSameForEveryThreadCount(
      {"fit", FOOTHOLD_SOURCE_DIR "/docs/examples/pl_w17_center.csv", "--expr",
       "h1*exp(-(x-c1)^2/(2*w1^2))+h2*exp(-(x-c2)^2/(2*w2^2))+a*x+b", "--starts", "32"});
}

TEST_CASE("Determinism: a 3-peak multi_gaussian fit is the same for 1, 2 and 8 threads",
          "[server]") {
  const fs::path csv = WriteTemp("three-peaks.csv", ThreePeaksCsv());
  CheckSameForEveryThreadCount(
      {"fit", csv.string(), "--family", "multi_gaussian", "--peaks", "3", "--starts", "32"});
  std::error_code ignored;
  fs::remove(csv, ignored);
}
