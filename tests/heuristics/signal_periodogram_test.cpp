// Lomb-Scargle periodogram on uneven, noisy sampling.

#include <catch2/catch.hpp>
#include <chrono>
#include <cmath>
#include <random>

#include "heuristics/signal/periodogram.h"
#include "heuristics/signal/sort_merge.h"

namespace foothold {
namespace signal {
namespace {

constexpr double kPi = 3.141592653589793;
constexpr double kRelativeFrequencyTolerance = 0.01;
constexpr double kRelativeAmplitudeTolerance = 0.05;
constexpr double kPhaseTolerance = 0.1;  // radians
constexpr double kPowerTolerance = 1e-8;

struct Sine {
  double amplitude, frequency, phase, offset;
  double At(double x) const {
    return amplitude * std::sin(2 * kPi * frequency * x + phase) + offset;
  }
};

// Uniformly random (not gridded) sample times, sorted.
PreparedCurve RandomSamples(const Sine& sine, int n, double span, double noise_sigma,
                            unsigned seed) {
  std::mt19937 rng(seed);
  std::uniform_real_distribution<double> when(0.0, span);
  std::normal_distribution<double> noise(0.0, noise_sigma);
  Eigen::VectorXd x(n), y(n);
  for (int i = 0; i < n; ++i) {
    x[i] = when(rng);
    y[i] = sine.At(x[i]) + noise(rng);
  }
  return SortAndMerge(x, y);
}

TEST_CASE("ComputeLombScargle: recovers a sine on uneven noisy sampling", "[heuristics]") {
  const Sine sine{2.0, 0.37, 0.8, 5.0};
  const PreparedCurve curve = RandomSamples(sine, 300, 40.0, 0.5, 17);
  REQUIRE(curve.IsOk());
  const Periodogram spectrum = ComputeLombScargle(curve.x, curve.y);
  REQUIRE(spectrum.IsOk());
  CHECK(spectrum.best_frequency == Approx(sine.frequency).epsilon(kRelativeFrequencyTolerance));
  CHECK(spectrum.amplitude == Approx(sine.amplitude).epsilon(kRelativeAmplitudeTolerance));
  CHECK(std::abs(std::remainder(spectrum.phase - sine.phase, 2 * kPi)) < kPhaseTolerance);
  CHECK(spectrum.offset == Approx(sine.offset).epsilon(kRelativeAmplitudeTolerance));
  CHECK(spectrum.false_alarm_probability < 1e-10);
  REQUIRE(spectrum.candidates.size() >= 2);
  CHECK(spectrum.candidates[0].power >= spectrum.candidates[1].power);
}

TEST_CASE("ComputeLombScargle: grid power matches the direct sum", "[heuristics]") {
  const Sine sine{1.0, 1.3, -0.4, 0.0};
  const PreparedCurve curve = RandomSamples(sine, 200, 25.0, 0.3, 4);
  LombScargleOptions options;
  options.keep_spectrum = true;
  const Periodogram spectrum = ComputeLombScargle(curve.x, curve.y, options);
  REQUIRE(spectrum.IsOk());
  REQUIRE(spectrum.powers.size() == spectrum.num_frequencies);
  // The recurrence must agree with cos/sin evaluated afresh, even far along the grid.
  for (int k : {0, 1, 511, 512, 513, spectrum.num_frequencies - 1}) {
    const double direct = LombScarglePower(curve.x, curve.y, spectrum.frequencies[k]);
    CHECK(spectrum.powers[k] == Approx(direct).margin(kPowerTolerance));
  }
  // A noise-free sinusoid over whole periods is fitted exactly, so its normalised power is
  // sum Y^2 / (2 var) = (n - 1) / 2 (follows from the definition above).
  const int n = 200;
  const Eigen::VectorXd even = Eigen::VectorXd::LinSpaced(n, 0.0, n - 1.0);
  Eigen::VectorXd wave(n);
  for (int i = 0; i < n; ++i) wave[i] = std::sin(2 * kPi * 0.05 * even[i] + 0.3);
  CHECK(LombScarglePower(even, wave, 0.05) == Approx(0.5 * (n - 1)).epsilon(kPowerTolerance));
}

TEST_CASE("ComputeLombScargle: 5000 points stay fast", "[heuristics]") {
  const Sine sine{1.0, 3.1, 0.0, 0.0};
  const PreparedCurve curve = RandomSamples(sine, 5000, 100.0, 1.0, 8);
  const auto start = std::chrono::steady_clock::now();
  const Periodogram spectrum = ComputeLombScargle(curve.x, curve.y);
  const double seconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  REQUIRE(spectrum.IsOk());
  CHECK(spectrum.best_frequency == Approx(sine.frequency).epsilon(kRelativeFrequencyTolerance));
  INFO("grid " << spectrum.num_frequencies << " frequencies in " << seconds << " s");
  constexpr double kMaxSeconds = 5.0;  // generous: the build machines are shared and loaded
  CHECK(seconds < kMaxSeconds);
}

TEST_CASE("ComputeLombScargle: degenerate inputs give clear statuses", "[heuristics]") {
  const Eigen::VectorXd x = Eigen::VectorXd::LinSpaced(10, 0.0, 9.0);
  const Periodogram flat = ComputeLombScargle(x, Eigen::VectorXd::Constant(10, 2.0));
  CHECK(flat.status == SignalStatus::kConstantY);
  const Eigen::VectorXd three = Eigen::VectorXd::LinSpaced(3, 0.0, 2.0);
  const Periodogram few = ComputeLombScargle(three, three);
  CHECK(few.status == SignalStatus::kTooFewPoints);
  CHECK(few.message == "3 points: need at least 4");
  const Eigen::VectorXd same = Eigen::VectorXd::Constant(10, 1.0);
  CHECK(ComputeLombScargle(same, x).status == SignalStatus::kAllXEqual);
  LombScargleOptions options;
  options.oversampling = 0.5;
  const Periodogram invalid = ComputeLombScargle(x, x, options);
  CHECK(invalid.status == SignalStatus::kInvalidOptions);
  CHECK(invalid.message == "oversampling = 0.5: must be finite and >= 1");
}

}  // namespace
}  // namespace signal
}  // namespace foothold
