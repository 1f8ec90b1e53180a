#pragma once
// The logistic function and its complement, each with full relative accuracy from one exp.

#include <cmath>

namespace foothold {
namespace family_math {

constexpr double kLn10 = 2.30258509299404568402;

// lower = 1/(1 + e^z) and upper = 1 - lower = e^z/(1 + e^z). Using a = e^{-|z|} <= 1 keeps
// both finite for every z (no inf/inf) and avoids the cancellation of 1 - lower.
struct LogisticPair {
  double lower;
  double upper;
};

inline LogisticPair Logistic(double z) {
  const double a = std::exp(-std::abs(z));
  const double inv = 1.0 / (1.0 + a);
  if (z >= 0.0) return {a * inv, inv};
  return {inv, a * inv};
}

}  // namespace family_math
}  // namespace foothold
