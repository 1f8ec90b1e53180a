#include "heuristics/internal/generic_design.h"

#include <algorithm>
#include <cmath>

namespace foothold {
namespace generic {
namespace {

// Cells for a parameter bounded on both sides.
constexpr int kBoundedLevels = 24;
// Magnitudes per decade and decades beyond the data scales on either side.
constexpr int kStepsPerDecade = 3;
constexpr double kDecadeMargin = 2;
// Points spread over the x range, for parameters that are locations (centers, periods).
constexpr int kLocationLevels = 16;
// Ratio above which a positive bounded range is sampled on a log scale.
constexpr double kLogSpanRatio = 100;
// The first primes: Halton bases, one per dimension (more dimensions reuse them with an
// offset, which keeps the design deterministic if less uniform).
constexpr unsigned kPrimes[] = {2,  3,  5,  7,  11, 13, 17, 19, 23, 29, 31, 37, 41,
                                43, 47, 53, 59, 61, 67, 71, 73, 79, 83, 89, 97};

std::vector<double> Magnitudes(const DataScales& scales) {
  const int k_low = static_cast<int>(
      std::floor((std::log10(scales.min_scale) - kDecadeMargin) * kStepsPerDecade));
  const int k_high =
      static_cast<int>(std::ceil((std::log10(scales.max_scale) + kDecadeMargin) * kStepsPerDecade));
  std::vector<double> magnitudes;
  for (int k = k_low; k <= k_high; ++k) {
    magnitudes.push_back(std::pow(10.0, static_cast<double>(k) / kStepsPerDecade));
  }
  return magnitudes;
}

std::vector<double> Locations(const DataScales& scales) {
  std::vector<double> locations;
  if (!(scales.x_max > scales.x_min)) return locations;
  for (int i = 0; i < kLocationLevels; ++i) {
    locations.push_back(scales.x_min + (i + 0.5) / kLocationLevels * (scales.x_max - scales.x_min));
  }
  return locations;
}

}  // namespace

std::vector<double> ParameterLevels(double lower, double upper, const DataScales& scales) {
  std::vector<double> levels;
  if (std::isfinite(lower) && std::isfinite(upper)) {
    if (lower == upper) return {lower};
    const bool log_spaced = lower > 0 && upper > kLogSpanRatio * lower;
    for (int i = 0; i < kBoundedLevels; ++i) {
      const double t = (i + 0.5) / kBoundedLevels;
      levels.push_back(log_spaced ? lower * std::pow(upper / lower, t)
                                  : lower + t * (upper - lower));
    }
    // The plain level first: 0 when it lies inside, else the middle cell.
    if (lower <= 0 && upper >= 0)
      levels.insert(levels.begin(), 0.0);
    else
      std::rotate(levels.begin(), levels.begin() + kBoundedLevels / 2, levels.end());
    return levels;
  }
  const std::vector<double> magnitudes = Magnitudes(scales);
  const std::vector<double> locations = Locations(scales);
  if (!std::isfinite(lower) && !std::isfinite(upper)) {
    levels.push_back(0.0);
    for (double m : magnitudes) {
      levels.push_back(m);
      levels.push_back(-m);
    }
    for (double l : locations) levels.push_back(l);
    return levels;
  }
  const bool from_lower = std::isfinite(lower);
  const double bound = from_lower ? lower : upper;
  if (bound == 0) levels.push_back(0.0);
  for (double m : magnitudes) levels.push_back(from_lower ? bound + m : bound - m);
  for (double l : locations) {
    if (from_lower ? l > bound : l < bound) levels.push_back(l);
  }
  return levels;
}

double RadicalInverse(unsigned index, unsigned base) {
  double result = 0;
  double fraction = 1.0 / base;
  while (index > 0) {
    result += (index % base) * fraction;
    index /= base;
    fraction /= base;
  }
  return result;
}

std::vector<std::vector<int>> DesignPoints(const std::vector<int>& num_levels, int budget) {
  const int m = static_cast<int>(num_levels.size());
  std::vector<std::vector<int>> points;
  double total = 1;
  for (int count : num_levels) total *= std::max(count, 1);
  if (total <= budget) {
    std::vector<int> index(m, 0);
    for (long t = 0; t < static_cast<long>(total); ++t) {
      points.push_back(index);
      for (int j = 0; j < m; ++j) {
        if (++index[j] < num_levels[j]) break;
        index[j] = 0;
      }
    }
    return points;
  }
  points.push_back(std::vector<int>(m, 0));
  const int num_primes = static_cast<int>(sizeof(kPrimes) / sizeof(kPrimes[0]));
  for (int t = 1; static_cast<int>(points.size()) < budget; ++t) {
    std::vector<int> index(m);
    for (int j = 0; j < m; ++j) {
      const unsigned base = kPrimes[j % num_primes];
      const unsigned offset = static_cast<unsigned>(j / num_primes) * 7919u;
      const double u = RadicalInverse(static_cast<unsigned>(t) + offset, base);
      index[j] = std::min(num_levels[j] - 1, static_cast<int>(u * num_levels[j]));
    }
    points.push_back(index);
  }
  return points;
}

}  // namespace generic
}  // namespace foothold
