#pragma once
// The deterministic design of the generic guesser: for each sampled parameter a list of
// levels built from the data scales and the bounds, and a low-discrepancy selection of
// level combinations (a full grid when it is small enough, else a Halton sequence).

#include <Eigen/Core>
#include <vector>

namespace foothold {
namespace generic {

// Typical magnitudes the data suggest for a parameter of unknown role.
struct DataScales {
  double x_min = 0;      // smallest value of the first predictor
  double x_max = 0;      // largest value of the first predictor
  double x_scale = 1;    // max(|x| range, largest |x|) over all predictors, > 0
  double y_scale = 1;    // max(|y| range, largest |y|), > 0
  double min_scale = 1;  // smallest of 1, x_scale, 1 / x_scale, y_scale, 1 / y_scale
  double max_scale = 1;  // largest of the same
};

// Levels for one parameter with bounds [lower, upper] (infinite where unbounded):
//  - both bounds finite: midpoints of equal cells, log-spaced when 0 < lower and
//    upper > 100 lower;
//  - unbounded: 0, ±10^k over the decades [min_scale / 100, max_scale * 100] in thirds of
//    a decade, and points spread over the range of x (for locations);
//  - one bound: the bound plus (or minus) those magnitudes, and the x points past it.
// Every level lies inside the bounds; the first level is the "plain" one (0 when allowed).
std::vector<double> ParameterLevels(double lower, double upper, const DataScales& scales);

// The radical inverse of `index` in `base` (van der Corput), in [0, 1).
double RadicalInverse(unsigned index, unsigned base);

// Up to `budget` combinations of level indices (one row per design point, one column per
// parameter): every combination when their count is at most `budget`, else the first
// point (all plain levels) followed by a Halton sequence mapped onto the level indices.
std::vector<std::vector<int>> DesignPoints(const std::vector<int>& num_levels, int budget);

}  // namespace generic
}  // namespace foothold
