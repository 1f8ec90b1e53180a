#pragma once
// A generated corpus of noisy datasets with known truth for every catalogue family, shared
// by the guesser tests and (later) the multistart tests. Header-only because each
// *_test.cpp builds alone. Deterministic for a seed: its own 64-bit generator (splitmix64)
// and Box-Muller normals, so the corpus is the same on every platform.
//
// Each family's datasets vary, case by case: the x scale (10^-9 .. 10^4; logistic4/5 take
// x in log10 units, so there the scale is the position of log_ec50 in -9 .. 4; arrhenius
// takes absolute temperatures 200 .. 1500 K), the y scale (10^-6 .. 10^6), the noise
// (signal-to-noise 5 .. 200, the signal being the feature's height or the curve's range),
// the number of points (log-uniform from the family's minimum, 12 for up to 4 parameters,
// to 5000) and the spacing (even for even case indices, sorted uniform draws otherwise).
// Peak families alternate overlapping (separation 1-2 FWHM) and separated (2.5-4 FWHM).

#include <Eigen/Core>
#include <algorithm>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <string>
#include <vector>

#include "heuristics/families/catalogue.h"

namespace foothold {
namespace corpus {

constexpr double kPi = 3.141592653589793;
constexpr double kGasConstant = 8.314462618;
constexpr double kFwhmPerSigma = 2.3548200450309493;
constexpr int kMaxPoints = 5000;

struct CorpusCase {
  std::string label;  // "gaussian#7 n=311 uneven snr=12.5 ..."
  FamilyRequest request;
  Eigen::VectorXd x;
  Eigen::VectorXd y;
  Eigen::VectorXd truth;  // in the model's parameter order
  double snr = 0;
  double x_scale = 0;
  double y_scale = 0;
  bool is_even = true;
  bool is_overlapping = false;  // peak families only
};

class Random {
 public:
  explicit Random(uint64_t seed) : state_(seed) {}
  uint64_t Next() {
    // splitmix64 (Steele, Lea & Flood 2014).
    uint64_t z = (state_ += 0x9E3779B97F4A7C15ULL);
    z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ULL;
    z = (z ^ (z >> 27)) * 0x94D049BB133111EBULL;
    return z ^ (z >> 31);
  }
  double Uniform(double lo = 0, double hi = 1) {
    return lo + (hi - lo) * static_cast<double>(Next() >> 11) * 0x1.0p-53;
  }
  double LogUniform(double lo, double hi) { return lo * std::pow(hi / lo, Uniform()); }
  double Normal() {
    const double u = Uniform(0x1.0p-53, 1.0);
    return std::sqrt(-2.0 * std::log(u)) * std::cos(2.0 * kPi * Uniform());
  }
  double Sign() { return Uniform() < 0.5 ? -1.0 : 1.0; }

 private:
  uint64_t state_;
};

inline std::string Short(double value) {
  char text[32];
  std::snprintf(text, sizeof(text), "%.3g", value);
  return text;
}

// n points on [lo, hi]: even, or sorted uniform draws that keep both ends.
inline Eigen::VectorXd MakeX(Random& random, int n, double lo, double hi, bool even) {
  Eigen::VectorXd x(n);
  for (int i = 0; i < n; ++i) {
    x[i] = even || i == 0 || i == n - 1 ? lo + (hi - lo) * i / (n - 1) : random.Uniform(lo, hi);
  }
  std::sort(x.data(), x.data() + n);
  return x;
}

// Values of the family's model at the truth.
inline Eigen::VectorXd Evaluate(const FamilyRequest& request, const Eigen::VectorXd& x,
                                const Eigen::VectorXd& truth) {
  FamilyInstance instance;
  std::string error;
  if (!InstantiateFamily(request, &instance, &error)) return Eigen::VectorXd();
  Eigen::VectorXd values(x.size());
  const Eigen::MatrixXd column = x;
  instance.model->Evaluate(column, truth.data(), values.data());
  return values;
}

struct Knobs {
  int n = 12;
  bool even = true;
  double x_scale = 1, y_scale = 1, snr = 10;
  int index = 0;
};

// Truth and x range for one family case; returns the noise-free signal height that the SNR
// refers to.
inline double MakeTruth(Random& r, const Knobs& k, CorpusCase* c) {
  const std::string& f = c->request.name;
  const double X = k.x_scale, Y = k.y_scale;
  const int n = k.n;
  Eigen::VectorXd& t = c->truth;
  auto set_x = [&](double lo, double hi) { c->x = MakeX(r, n, lo, hi, k.even); };
  if (f == "line") {
    t = Eigen::Vector2d(r.Uniform(-2, 2) * Y / X, r.Uniform(-1, 1) * Y);
    set_x(r.Uniform(-1, 0) * X, r.Uniform(0.5, 2) * X);
    return std::abs(t[0]) * (c->x[n - 1] - c->x[0]) + 0.1 * Y;
  }
  if (f == "polynomial") {
    c->request.degree = 2 + k.index % 2;
    t.resize(c->request.degree + 1);
    for (int j = 0; j < t.size(); ++j) t[j] = r.Normal() * Y / std::pow(X, j);
    set_x(-X, X);
    return Y;
  }
  const bool is_peak = f == "gaussian" || f == "lorentzian" || f == "pseudo_voigt" ||
                       f == "multi_gaussian" || f == "multi_lorentzian";
  if (is_peak) {
    const int peaks = f.rfind("multi_", 0) == 0 ? 2 + k.index % 2 : 1;
    if (peaks > 1) c->request.peaks = peaks;
    c->is_overlapping = peaks > 1 && k.index % 4 < 2;
    const double separation = c->is_overlapping ? r.Uniform(1, 2) : r.Uniform(2.5, 4);
    // At least 5 points per FWHM; the whole pattern within 70% of the x range.
    double fwhm = std::max(r.Uniform(0.05, 0.15), 5.0 / n) * X;
    fwhm = std::min(fwhm, 0.7 * X / ((peaks - 1) * separation + 2.5));
    const double first =
        0.5 * X - 0.5 * (peaks - 1) * separation * fwhm + r.Uniform(-0.05, 0.05) * X;
    const double baseline = r.Uniform(-0.5, 0.5) * Y;
    double height_min = 1e300;
    if (f == "pseudo_voigt") {
      t.resize(5);
      t << r.Uniform(0.5, 2) * Y, first, fwhm, r.Uniform(0, 1), baseline;
      height_min = t[0];
    } else {
      t.resize(3 * peaks + 1);
      const double per_fwhm = f.find("lorentzian") != std::string::npos ? 0.5 : 1 / kFwhmPerSigma;
      for (int m = 0; m < peaks; ++m) {
        const double h = r.Uniform(0.5, 1.5) * Y;
        t.segment<3>(3 * m) << h, first + m * separation * fwhm,
            fwhm * r.Uniform(0.8, 1.25) * per_fwhm;
        height_min = std::min(height_min, h);
      }
      t[3 * peaks] = baseline;
    }
    set_x(0, X);
    return height_min;
  }
  if (f == "exp_decay" || f == "biexp_decay" || f == "stretched_exp") {
    const double b = r.Uniform(-0.5, 0.5) * Y;
    if (f == "exp_decay") {
      t = Eigen::Vector3d(r.Sign() * r.Uniform(0.5, 2) * Y, r.Uniform(0.1, 0.5) * X, b);
    } else if (f == "biexp_decay") {
      const double tau1 = r.Uniform(0.03, 0.1) * X;
      t.resize(5);
      t << r.Uniform(0.5, 1.5) * Y, tau1, r.Uniform(0.5, 1.5) * Y, tau1 * r.Uniform(4, 10), b;
    } else {
      t = Eigen::Vector4d(r.Uniform(0.5, 2) * Y, r.Uniform(0.1, 0.4) * X, r.Uniform(0.4, 1.8), b);
    }
    set_x(0, X);
    return f == "biexp_decay" ? t[0] + t[2] : std::abs(t[0]);
  }
  if (f == "logistic4" || f == "logistic5") {
    // Here the x scale is the position: log_ec50 in -9 .. 4 (log10 concentration).
    const double ec50 = std::log10(X);
    const double hill = r.Sign() * r.Uniform(0.5, 3);
    const double bottom = r.Uniform(-0.2, 0.2) * Y, top = bottom + r.Uniform(0.5, 2) * Y;
    t.resize(f == "logistic5" ? 5 : 4);
    t.head<4>() << bottom, top, ec50, hill;
    if (f == "logistic5") t[4] = r.LogUniform(0.4, 2.5);
    set_x(ec50 - r.Uniform(1.5, 3) / std::abs(hill), ec50 + r.Uniform(1.5, 3) / std::abs(hill));
    return top - bottom;
  }
  if (f == "michaelis_menten") {
    const double km = r.Uniform(0.2, 2) * X;
    t = Eigen::Vector2d(r.Uniform(0.5, 2) * Y, km);
    set_x(0.02 * km, km * r.Uniform(3, 10));
    return t[0] * c->x[n - 1] / (km + c->x[n - 1]);
  }
  if (f == "hill_binding") {
    const double kd = r.Uniform(0.5, 2) * X;
    t = Eigen::Vector3d(r.Uniform(0.5, 2) * Y, kd, r.Uniform(0.6, 3));
    set_x(0.05 * kd, kd * r.Uniform(4, 10));
    return t[0] * 0.9;
  }
  if (f == "power_law") {
    const double k_exp = r.Uniform(-2.5, 2.5);
    t = Eigen::Vector2d(r.Sign() * Y / std::pow(X, k_exp), k_exp);
    set_x(X, X * r.Uniform(10, 100));
    const Eigen::VectorXd v = Evaluate(c->request, c->x, t);
    return v.maxCoeff() - v.minCoeff();
  }
  if (f == "sine" || f == "damped_sine") {
    const double cycles = r.Uniform(2, std::min(25.0, n / 8.0));
    const double a = r.Uniform(0.5, 2) * Y, phase = r.Uniform(-kPi, kPi), b = r.Uniform(-1, 1) * Y;
    if (f == "sine") {
      t = Eigen::Vector4d(a, cycles / X, phase, b);
    } else {
      t.resize(5);
      t << a, r.Uniform(0.3, 2) * X, cycles / X, phase, b;
    }
    set_x(0, X);
    return a;
  }
  if (f == "gompertz") {
    const double rate = r.Uniform(4, 15) / X;
    t = Eigen::Vector3d(r.Uniform(0.5, 2) * Y, rate * r.Uniform(0.25, 0.6) * X, rate);
    set_x(0, X);
    return t[0];
  }
  if (f == "arrhenius") {
    // Temperatures 200 .. 1500 K; Ea / (R T0) in 5 .. 40; k ~ the y scale mid-range.
    const double t0 = r.Uniform(200, 600), t1 = t0 * r.Uniform(1.3, 2.5);
    const double ea = r.Uniform(5, 40) * kGasConstant * t0;
    t = Eigen::Vector2d(Y * std::exp(ea / (kGasConstant * 0.5 * (t0 + t1))), ea);
    set_x(t0, t1);
    const Eigen::VectorXd v = Evaluate(c->request, c->x, t);
    return v.maxCoeff() - v.minCoeff();
  }
  return 0;
}

// Fewest points a family's datasets get: 12, or 4 per parameter when that is more.
inline int MinPoints(const FamilyRequest& request) {
  FamilyInstance instance;
  std::string error;
  if (!InstantiateFamily(request, &instance, &error)) return 12;
  return std::max(12, 4 * instance.model->NumParameters());
}

// num_cases datasets per catalogue family, in catalogue order.
inline std::vector<CorpusCase> GenerateCorpus(uint64_t seed, int num_cases) {
  std::vector<CorpusCase> corpus;
  Random random(seed);
  for (const FamilyDescription& family : FamilyCatalogue()) {
    for (int i = 0; i < num_cases; ++i) {
      CorpusCase c;
      c.request.name = family.name;
      Knobs knobs;
      knobs.index = i;
      knobs.even = i % 2 == 0;
      // The multi-peak count is set in MakeTruth; its minimum point count follows it.
      FamilyRequest sized = c.request;
      if (family.name.rfind("multi_", 0) == 0) sized.peaks = 2 + i % 2;
      const int min_points = MinPoints(sized);
      // The extremes are always present: the first case is the shortest, the second the longest.
      knobs.n = i == 0   ? min_points
                : i == 1 ? kMaxPoints
                         : static_cast<int>(std::lround(random.LogUniform(min_points, kMaxPoints)));
      knobs.x_scale = i == 2 ? 1e-9 : i == 3 ? 1e4 : std::pow(10.0, random.Uniform(-9, 4));
      knobs.y_scale = i == 4 ? 1e-6 : i == 5 ? 1e6 : std::pow(10.0, random.Uniform(-6, 6));
      knobs.snr = i == 6 ? 5 : i == 7 ? 200 : random.LogUniform(5, 200);
      const double signal = MakeTruth(random, knobs, &c);
      const Eigen::VectorXd clean = Evaluate(c.request, c.x, c.truth);
      const double noise = signal / knobs.snr;
      c.y.resize(clean.size());
      for (int j = 0; j < clean.size(); ++j) c.y[j] = clean[j] + noise * random.Normal();
      c.snr = knobs.snr;
      c.x_scale = knobs.x_scale;
      c.y_scale = knobs.y_scale;
      c.is_even = knobs.even;
      c.label = family.name + "#" + std::to_string(i) + " n=" + std::to_string(knobs.n) +
                (knobs.even ? " even" : " uneven") + " snr=" + Short(knobs.snr) +
                " xscale=" + Short(knobs.x_scale) + " yscale=" + Short(knobs.y_scale) +
                (c.is_overlapping ? " overlapping" : "");
      corpus.push_back(std::move(c));
    }
  }
  return corpus;
}

}  // namespace corpus
}  // namespace foothold
