// Model comparison: AICc ranking, Akaike weights, the nested F-test, and the compare
// command. Akaike weights and the F statistic follow Burnham & Anderson 2002 (ch. 2) and the
// extra-sum-of-squares test of a nested least-squares model (Bates & Watts 1988, 3.6).
#include <catch2/catch.hpp>
#include <cmath>
#include <fstream>
#include <functional>
#include <random>
#include <sstream>

#include "server/cli.h"
#include "server/compare_command.h"
#include "server/model_comparison.h"

using foothold::CandidateFit;
using foothold::FitRequest;
using foothold::ModelComparison;
using foothold::ModelSpec;

namespace {

constexpr int kReplicates = 100;
constexpr double kMinWinRate = 0.9;  // the brief's rate: the true family first in >= 90%
constexpr double kHeight = 10;
constexpr double kSnr = 50;  // peak height over noise standard deviation
constexpr int kPoints = 41;
constexpr int kStarts = 8;

class Noise {
 public:
  explicit Noise(std::uint32_t seed) : engine_(seed) {}
  // Box–Muller on the Mersenne Twister stream, independent of normal_distribution.
  double Next() {
    const double u1 = (engine_() + 1.0) / 4294967297.0;
    const double u2 = (engine_() + 1.0) / 4294967297.0;
    return std::sqrt(-2 * std::log(u1)) * std::cos(2 * M_PI * u2);
  }

 private:
  std::mt19937 engine_;
};

FitRequest Generate(const std::function<double(double)>& f, std::uint32_t seed) {
  Noise noise(seed);
  std::vector<double> x;
  std::vector<double> y;
  for (int i = 0; i < kPoints; ++i) {
    x.push_back(10.0 * i / (kPoints - 1));
    y.push_back(f(x.back()) + kHeight / kSnr * noise.Next());
  }
  FitRequest request;
  std::string error;
  REQUIRE(request.data.AddColumn("x", x, &error));
  REQUIRE(request.data.AddColumn("y", y, &error));
  request.starts = kStarts;
  request.threads = 2;
  return request;
}

double Lorentzian(double x) { return kHeight / (1 + (x - 5) * (x - 5) / (1.2 * 1.2)) + 1; }
double Gaussian(double x) { return kHeight * std::exp(-(x - 5) * (x - 5) / (2 * 1.2 * 1.2)) + 1; }

ModelSpec Spec(const std::string& family) {
  ModelSpec spec;
  spec.family = family;
  return spec;
}

std::vector<ModelSpec> Families(const std::vector<std::string>& names) {
  std::vector<ModelSpec> specs;
  for (const std::string& name : names) specs.push_back(Spec(name));
  return specs;
}

ModelComparison Compare(const FitRequest& request, const std::vector<std::string>& names) {
  std::vector<CandidateFit> fits;
  std::string error;
  const bool ok = foothold::FitFamilies(request, Families(names), &fits, &error);
  INFO(error);
  REQUIRE(ok);
  return foothold::CompareFits(fits);
}

double WinRate(const std::function<double(double)>& truth, const std::string& expected) {
  int wins = 0;
  for (int r = 0; r < kReplicates; ++r) {
    const ModelComparison comparison =
        Compare(Generate(truth, 1000 + r), {"gaussian", "lorentzian", "pseudo_voigt"});
    if (comparison.winner == expected) ++wins;
  }
  return static_cast<double>(wins) / kReplicates;
}

}  // namespace

TEST_CASE("ModelComparison: lorentzian data rank lorentzian first at SNR 50", "[server]") {
  const double rate = WinRate(Lorentzian, "lorentzian");
  WARN("lorentzian first in " << rate * 100 << "% of " << kReplicates << " replicates");
  CHECK(rate >= kMinWinRate);
}

TEST_CASE("ModelComparison: gaussian data rank gaussian first at SNR 50", "[server]") {
  const double rate = WinRate(Gaussian, "gaussian");
  WARN("gaussian first in " << rate * 100 << "% of " << kReplicates << " replicates");
  CHECK(rate >= kMinWinRate);
}

TEST_CASE("ModelComparison: weights sum to one and follow exp(-dAICc/2)", "[server]") {
  const ModelComparison comparison =
      Compare(Generate(Lorentzian, 7), {"gaussian", "lorentzian", "pseudo_voigt"});
  REQUIRE(comparison.ranking.size() == 3);
  double total = 0;
  for (const foothold::RankedModel& row : comparison.ranking) total += row.akaike_weight;
  CHECK(total == Approx(1.0));
  CHECK(comparison.ranking[0].delta_aicc == 0);
  const auto& a = comparison.ranking[0];
  const auto& b = comparison.ranking[1];
  CHECK(b.akaike_weight / a.akaike_weight == Approx(std::exp(-b.delta_aicc / 2)));
  CHECK(comparison.winner_margin == Approx(b.aicc - a.aicc));
}

TEST_CASE("ModelComparison: the nested F-test matches its formula and prefers the truth",
          "[server]") {
  // A parabola: line is nested in polynomial(2) and clearly insufficient.
  const FitRequest request = Generate([](double x) { return 1 + x + 0.3 * x * x; }, 3);
  const ModelComparison comparison = Compare(request, {"line", "polynomial"});
  REQUIRE(comparison.nested.size() == 1);
  const foothold::NestedTest& test = comparison.nested[0];
  CHECK(test.simpler == "line");
  CHECK(test.fuller == "polynomial(2)");
  CHECK(test.df_extra == 1);
  CHECK(test.df_residual == kPoints - 3);
  CHECK(test.prefers_fuller);
  CHECK(test.p_value < 1e-6);
  CHECK(comparison.winner == "polynomial(2)");
}

TEST_CASE("ModelComparison: declared nestings", "[server]") {
  std::string nesting;
  bool on_boundary = false;
  const ModelSpec gaussian = Spec("gaussian");
  const ModelSpec voigt = Spec("pseudo_voigt");
  CHECK(foothold::FamilyNestedIn(gaussian, voigt, &nesting, &on_boundary));
  CHECK(nesting == "eta = 0");
  CHECK(on_boundary);
  CHECK_FALSE(foothold::FamilyNestedIn(voigt, gaussian, &nesting, &on_boundary));
  CHECK(foothold::FamilyNestedIn(Spec("logistic4"), Spec("logistic5"), &nesting, &on_boundary));
  CHECK(nesting == "asymmetry = 1");
  CHECK_FALSE(
      foothold::FamilyNestedIn(Spec("gaussian"), Spec("lorentzian"), &nesting, &on_boundary));
}

TEST_CASE("CompareCommand: bad input exits 2 with one line", "[server]") {
  std::ostringstream out;
  std::ostringstream err;
  CHECK(foothold::RunCompare({"data.csv", "--families", "gaussian"}, out, err) ==
        foothold::kExitBadInput);
  CHECK(err.str().find("at least two") != std::string::npos);
  err.str("");
  CHECK(foothold::RunCompare({"data.csv", "--families", "gaussian,line", "--family", "line"}, out,
                             err) == foothold::kExitBadInput);
  CHECK(err.str().find("--family") != std::string::npos);
}

TEST_CASE("CompareCommand: the table names the winner and the F-test", "[server]") {
  const std::string path = std::string(FOOTHOLD_BINARY_DIR) + "/compare_test_data.csv";
  {
    Noise noise(5);
    std::ofstream file(path);
    file << "x,y\n";
    for (int i = 0; i < kPoints; ++i) {
      const double x = 10.0 * i / (kPoints - 1);
      file << x << ',' << Lorentzian(x) + kHeight / kSnr * noise.Next() << '\n';
    }
  }
  std::ostringstream out;
  std::ostringstream err;
  const int code = foothold::RunCompare(
      {path, "--families", "gaussian,lorentzian,pseudo_voigt", "--starts", "8"}, out, err);
  INFO(out.str() << err.str());
  CHECK(code == foothold::kExitOk);
  CHECK(out.str().find("best: ") != std::string::npos);
  CHECK(out.str().find("lorentzian in pseudo_voigt at eta = 1") != std::string::npos);
  std::ostringstream json;
  CHECK(foothold::RunCompare({path, "--families", "gaussian,lorentzian", "--starts", "8", "--json"},
                             json, err) == foothold::kExitOk);
  CHECK(json.str().find("\"winner\": \"lorentzian\"") != std::string::npos);
}

TEST_CASE("CompareCommand: a fit stopped by its iteration limit exits 3 with the table",
          "[server]") {
  const std::string path = std::string(FOOTHOLD_BINARY_DIR) + "/compare_test_limit.csv";
  {
    Noise noise(9);
    std::ofstream file(path);
    file << "x,y\n";
    for (int i = 0; i < kPoints; ++i) {
      const double x = 10.0 * i / (kPoints - 1);
      file << x << ',' << Gaussian(x) + kHeight / kSnr * noise.Next() << '\n';
    }
  }
  std::ostringstream out;
  std::ostringstream err;
  const int code = foothold::RunCompare(
      {path, "--families", "gaussian,lorentzian", "--starts", "1", "--max-iterations", "1"}, out,
      err);
  INFO(out.str() << err.str());
  CHECK(code == foothold::kExitNotConverged);
  CHECK(out.str().find("not_converged") != std::string::npos);
}
