#pragma once
// Small helpers shared by the certification tests: log relative error, a portable seeded
// normal generator, and text formatting of numbers that round-trip.

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <limits>
#include <random>
#include <string>

namespace foothold {
namespace certification {

// NIST certified values carry 11 significant digits, so no score can exceed 11.
constexpr double kMaxLre = 11.0;

// Log relative error of an estimate q against a certified value c (NIST StRD scoring, see
// tests/data/nist-strd/README.md): -log10(|q - c| / |c|), or -log10|q| when c == 0, capped at
// kMaxLre and floored at 0. A non-finite estimate scores 0.
inline double Lre(double q, double c) {
  if (!std::isfinite(q)) return 0.0;
  const double diff = std::abs(q - c);
  if (diff == 0.0) return kMaxLre;
  const double relative = (c == 0.0) ? std::abs(q) : diff / std::abs(c);
  const double lre = -std::log10(relative);
  return std::clamp(lre, 0.0, kMaxLre);
}

// Relative difference |a - b| / |b| (|a| when b == 0).
inline double RelativeDifference(double a, double b) {
  if (b == 0.0) return std::abs(a);
  return std::abs(a - b) / std::abs(b);
}

// A seeded generator whose output does not depend on the standard library's distribution
// implementations: uniform from the top 53 bits of mt19937_64 (fully specified by the
// standard), normal by the Box–Muller transform.
class SeededNormal {
 public:
  explicit SeededNormal(std::uint64_t seed) : engine_(seed) {}

  // Uniform on (0, 1).
  double Uniform() {
    const std::uint64_t bits = engine_() >> 11;
    return (static_cast<double>(bits) + 0.5) * (1.0 / 9007199254740992.0);
  }
  // Uniform on (lo, hi).
  double Uniform(double lo, double hi) { return lo + (hi - lo) * Uniform(); }
  // Standard normal.
  double Normal() {
    if (has_spare_) {
      has_spare_ = false;
      return spare_;
    }
    const double u1 = Uniform();
    const double u2 = Uniform();
    const double radius = std::sqrt(-2.0 * std::log(u1));
    const double angle = 2.0 * 3.14159265358979323846 * u2;
    spare_ = radius * std::sin(angle);
    has_spare_ = true;
    return radius * std::cos(angle);
  }

 private:
  std::mt19937_64 engine_;
  bool has_spare_ = false;
  double spare_ = 0.0;
};

// A double printed with 17 significant digits, enough to read back the same value.
inline std::string RoundTrip(double value) {
  char buffer[40];
  std::snprintf(buffer, sizeof(buffer), "%.17g", value);
  return buffer;
}

}  // namespace certification
}  // namespace foothold
