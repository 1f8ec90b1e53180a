#pragma once
// Location parameters of an arbitrary model and the data's peak positions, for the generic
// guesser's peak-seeded design (docs/generic-guesser.md, step 4).
//
// A parameter is a location of the first predictor when the model's sensitivity to it
// follows it along x, as for c in h * g(x - c): with every linear coefficient set to 1, the
// centroid of |df/dc| over the data moves by about as much as c itself when c is placed at
// 30%, 50% and 70% of the x range. Rates, periods, widths and amplitudes do not behave so;
// no expression text is read.

#include <Eigen/Core>
#include <vector>

#include "engine/model/dataset.h"
#include "engine/model/model.h"

namespace foothold {
namespace generic {

// Indices (into the model's parameters) among `candidates` that behave as locations at one
// of the `probes` (full parameter vectors; linear coefficients are set to 1 for the test).
std::vector<int> FindLocationParameters(const Model& model, const Dataset& data,
                                        const std::vector<int>& candidates,
                                        const std::vector<int>& linear,
                                        const std::vector<Eigen::VectorXd>& probes);

// A peak of the data or of residuals: where it is and how wide (full width at half height).
struct SeedPeak {
  double center = 0;
  double fwhm = 0;
};

// Adds to `peaks` the most prominent peaks, shoulders and dips of `signal` (the response,
// residuals of a fit) along the first predictor, each position once (positions closer than
// 2% of the x range are one), until there are `max_peaks`. Returns how many were added.
int AddPeakCenters(const Dataset& data, const Eigen::VectorXd& signal, int max_peaks,
                   std::vector<SeedPeak>* peaks);

// Ordered assignments of distinct centers to `num_locations` slots: every injective map
// when there are enough centers, else every way to fill the first slots with all centers
// (-1 marks a slot left to the design). At most `max_assignments`, deterministic order.
std::vector<std::vector<int>> CenterAssignments(int num_locations, int num_centers,
                                                int max_assignments);

}  // namespace generic
}  // namespace foothold
