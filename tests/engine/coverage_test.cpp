// Coverage of the 95% intervals: simulated datasets with known truth and known absolute
// sigma, each fitted from the truth (this tests the statistics, not the guessers); the Wald
// interval of fit_statistics.h and the profile interval of profile_likelihood.h should each
// contain the truth in about 95% of the datasets.
#include <algorithm>
#include <catch2/catch.hpp>
#include <chrono>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <random>
#include <string>
#include <vector>

#include "engine/model/families/decay_models.h"
#include "engine/model/families/peak_models.h"
#include "engine/solve/local_fit.h"
#include "engine/stats/fit_statistics.h"
#include "engine/stats/profile_likelihood.h"

namespace foothold {
namespace {

constexpr int kDatasets = 2000;
constexpr double kLevel = 0.95;
// The acceptance band of issue #7: 93% to 97%. With kDatasets = 2000 the binomial standard
// deviation of a rate is sqrt(0.95 * 0.05 / 2000) = 0.49%, so the band is +-4.1 standard
// deviations: a correct method falls outside with probability 4e-5 per rate, while one
// whose true coverage is 92% still passes with probability about 5%, and at 91% under 0.2%.
// At the minimum of 500 datasets the band would be +-2.05 standard deviations, which
// one of the 14 rates would leave by chance about half the time.
constexpr double kLowestRate = 0.93;
constexpr double kHighestRate = 0.97;
constexpr std::uint64_t kSeed = 20261202;
// The intervals_disagree threshold (VerdictOptions::max_interval_ratio = 2 in the server
// layer, which this engine test cannot include): no well-posed fit here may reach it.
constexpr double kMaxWellPosedWidthRatio = 2;

// Standard normal deviates by Box–Muller over mt19937_64, whose output the C++ standard fixes
// (std::normal_distribution is implementation-defined, so it would differ between libraries).
class NormalStream {
 public:
  explicit NormalStream(std::uint64_t seed) : engine_(seed) {}
  double Next() {
    if (has_spare_) {
      has_spare_ = false;
      return spare_;
    }
    constexpr double kTwoPi = 6.283185307179586;
    const double u1 = (static_cast<double>(engine_() >> 11) + 0.5) * 0x1.0p-53;
    const double u2 = static_cast<double>(engine_() >> 11) * 0x1.0p-53;
    const double radius = std::sqrt(-2 * std::log(u1));
    spare_ = radius * std::sin(kTwoPi * u2);
    has_spare_ = true;
    return radius * std::cos(kTwoPi * u2);
  }

 private:
  std::mt19937_64 engine_;
  double spare_ = 0;
  bool has_spare_ = false;
};

struct Scenario {
  const char* family;
  const Model* model;
  Eigen::VectorXd truth;
  Eigen::VectorXd x;
  double noise;  // the absolute sigma of every point, also the simulated noise
};

struct CoverageCounts {
  std::vector<int> wald;
  std::vector<int> profile;
  int num_failed_fits = 0;
  int num_open_profiles = 0;
  int num_refits = 0;
  // The largest max(r, 1/r) of r = profile half-width / Wald half-width over every side of
  // every parameter and dataset: how far a well-posed fit is from the intervals_disagree
  // threshold (server/verdict.h, 2 by default).
  double worst_width_ratio = 1;
  std::vector<double> width_ratios;  // every side of every closed interval
  double seconds = 0;
};

double WidthRatio(double profile_half_width, double wald_half_width) {
  const double r = profile_half_width / wald_half_width;
  return std::max(r, 1 / r);
}

bool Covers(double low, double high, double truth) { return low <= truth && truth <= high; }

CoverageCounts Simulate(const Scenario& scenario, std::uint64_t seed) {
  const auto started = std::chrono::steady_clock::now();
  const int p = scenario.model->NumParameters();
  const int n = static_cast<int>(scenario.x.size());
  Eigen::VectorXd clean(n);
  scenario.model->Evaluate(scenario.x, scenario.truth.data(), clean.data());
  Problem problem;
  problem.model = scenario.model;
  problem.data.predictor_names = {"x"};
  problem.data.predictors = scenario.x;
  problem.data.sigma = Eigen::VectorXd::Constant(n, scenario.noise);
  problem.sigma_mode = SigmaMode::kAbsolute;

  CoverageCounts counts;
  counts.wald.assign(p, 0);
  counts.profile.assign(p, 0);
  NormalStream normal(seed);
  StatisticsOptions statistics_options;
  statistics_options.confidence_level = kLevel;
  ProfileLikelihoodOptions profile_options;
  profile_options.confidence_level = kLevel;
  for (int k = 0; k < kDatasets; ++k) {
    problem.data.response.resize(n);
    for (int i = 0; i < n; ++i)
      problem.data.response[i] = clean[i] + scenario.noise * normal.Next();
    const LocalFitSummary fit = RunLocalFit(problem, scenario.truth, LocalFitOptions{});
    if (!fit.IsConverged()) {
      ++counts.num_failed_fits;  // counts as not covered: never excused
      continue;
    }
    const FitStatistics stats = ComputeFitStatistics(problem, fit.parameters, statistics_options);
    const ProfileLikelihoodSummary profile =
        ComputeProfileLikelihood(problem, fit.parameters, profile_options);
    counts.num_refits += profile.num_refits;
    for (int j = 0; j < p; ++j) {
      counts.wald[j] += Covers(stats.ci_low[j], stats.ci_high[j], scenario.truth[j]) ? 1 : 0;
      const ProfileInterval& interval = profile.intervals[j];
      counts.num_open_profiles += interval.IsClosed() ? 0 : 1;
      counts.profile[j] += Covers(interval.lower, interval.upper, scenario.truth[j]) ? 1 : 0;
      if (interval.IsClosed()) {
        const double estimate = fit.parameters[j];
        for (double ratio : {WidthRatio(estimate - interval.lower, estimate - stats.ci_low[j]),
                             WidthRatio(interval.upper - estimate, stats.ci_high[j] - estimate)}) {
          counts.worst_width_ratio = std::max(counts.worst_width_ratio, ratio);
          counts.width_ratios.push_back(ratio);
        }
      }
    }
  }
  counts.seconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
  return counts;
}

void CheckCoverage(const Scenario& scenario, const CoverageCounts& counts) {
  const double sd = std::sqrt(kLevel * (1 - kLevel) / kDatasets);
  std::printf(
      "%s: %d datasets, band %.1f%%..%.1f%% (binomial sd %.2f%%), %d failed fits, "
      "%d open profile intervals, %d refits, worst half-width ratio %.3f, %.2f s\n",
      scenario.family, kDatasets, 100 * kLowestRate, 100 * kHighestRate, 100 * sd,
      counts.num_failed_fits, counts.num_open_profiles, counts.num_refits, counts.worst_width_ratio,
      counts.seconds);
  std::vector<double> ratios = counts.width_ratios;
  std::sort(ratios.begin(), ratios.end());
  if (!ratios.empty()) {
    std::printf(
        "  profile/Wald half-width ratio (max(r, 1/r)): median %.3f, 99th percentile %.3f\n",
        ratios[ratios.size() / 2], ratios[ratios.size() * 99 / 100]);
  }
  const std::vector<std::string>& names = scenario.model->ParameterNames();
  for (size_t j = 0; j < names.size(); ++j) {
    const double wald = static_cast<double>(counts.wald[j]) / kDatasets;
    const double profile = static_cast<double>(counts.profile[j]) / kDatasets;
    std::printf("  %-9s wald %.1f%%  profile %.1f%%\n", names[j].c_str(), 100 * wald,
                100 * profile);
    INFO(scenario.family << " " << names[j] << ": wald " << wald << ", profile " << profile);
    CHECK(wald >= kLowestRate);
    CHECK(wald <= kHighestRate);
    CHECK(profile >= kLowestRate);
    CHECK(profile <= kHighestRate);
  }
  CHECK(counts.num_failed_fits == 0);
  CHECK(counts.num_open_profiles == 0);
  // A well-posed fit never raises intervals_disagree.
  CHECK(counts.worst_width_ratio < kMaxWellPosedWidthRatio);
}

Eigen::VectorXd Grid(int n, double step) {
  Eigen::VectorXd x(n);
  for (int i = 0; i < n; ++i) x[i] = step * i;
  return x;
}

TEST_CASE("Coverage: 95% Wald and profile intervals of gaussian fits cover the truth", "[engine]") {
  const GaussianModel model;
  // A peak of height 3 over noise 0.3 (signal to noise 10), about 13 points across its FWHM.
  const Scenario scenario{"gaussian", &model, (Eigen::VectorXd(4) << 3, 5, 0.8, 0.5).finished(),
                          Grid(41, 0.25), 0.3};
  CheckCoverage(scenario, Simulate(scenario, kSeed));
}

TEST_CASE("Coverage: 95% Wald and profile intervals of exp_decay fits cover the truth",
          "[engine]") {
  const ExpDecayModel model;
  // Five lifetimes sampled, amplitude 5 over noise 0.3: tau's profile is visibly skewed.
  const Scenario scenario{"exp_decay", &model, Eigen::Vector3d(5, 2, 0.5), Grid(40, 0.25), 0.3};
  CheckCoverage(scenario, Simulate(scenario, kSeed + 1));
}

}  // namespace
}  // namespace foothold
