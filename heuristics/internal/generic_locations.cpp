#include "heuristics/internal/generic_locations.h"

#include <algorithm>
#include <cmath>
#include <functional>

#include "heuristics/signal/peaks.h"
#include "heuristics/signal/sort_merge.h"

namespace foothold {
namespace generic {
namespace {

// Where the probed location is placed, as shares of the x range.
constexpr double kProbeShares[] = {0.3, 0.5, 0.7};
// The centroid must move by this share of the location's move, within the tolerance.
constexpr double kLocationSlopeTolerance = 0.25;
// Central-difference step, as a share of the x range.
constexpr double kDifferenceShare = 1e-4;
// The typical width of the second probe of each point, as a share of the x range.
constexpr double kTypicalWidthShare = 0.1;
// Peak positions closer than this share of the x range are one.
constexpr double kSameCenterShare = 0.02;

// Centroid along x of |f(theta + h e_j) - f(theta - h e_j)|, or NaN when the model does not
// respond or is not finite.
double SensitivityCentroid(const Model& model, const Dataset& data, Eigen::VectorXd theta, int j,
                           double h) {
  const int n = data.NumPoints();
  Eigen::VectorXd up(n), down(n);
  up.setConstant(std::nan(""));
  down.setConstant(std::nan(""));
  const double center = theta[j];
  theta[j] = center + h;
  model.Evaluate(data.predictors, theta.data(), up.data());
  theta[j] = center - h;
  model.Evaluate(data.predictors, theta.data(), down.data());
  const Eigen::VectorXd weight = (up - down).cwiseAbs();
  const double total = weight.sum();
  if (!std::isfinite(total) || !(total > 0)) return std::nan("");
  return weight.dot(data.predictors.col(0)) / total;
}

bool IsLocationAt(const Model& model, const Dataset& data, const Eigen::VectorXd& probe, int j,
                  double x_min, double span) {
  double centroids[3];
  for (int k = 0; k < 3; ++k) {
    Eigen::VectorXd theta = probe;
    theta[j] = x_min + kProbeShares[k] * span;
    centroids[k] = SensitivityCentroid(model, data, theta, j, kDifferenceShare * span);
    if (!std::isfinite(centroids[k])) return false;
  }
  for (int k = 0; k + 1 < 3; ++k) {
    const double slope =
        (centroids[k + 1] - centroids[k]) / ((kProbeShares[k + 1] - kProbeShares[k]) * span);
    if (std::abs(slope - 1.0) > kLocationSlopeTolerance) return false;
  }
  return true;
}

}  // namespace

std::vector<int> FindLocationParameters(const Model& model, const Dataset& data,
                                        const std::vector<int>& candidates,
                                        const std::vector<int>& linear,
                                        const std::vector<Eigen::VectorXd>& probes) {
  std::vector<int> locations;
  if (data.predictors.cols() == 0 || data.NumPoints() == 0) return locations;
  const double x_min = data.predictors.col(0).minCoeff();
  const double span = data.predictors.col(0).maxCoeff() - x_min;
  if (!(span > 0)) return locations;
  // Each probe as given, and with the other candidates at a typical width (a share of the
  // x range): a probe whose widths are far wider than the data hides a location.
  std::vector<Eigen::VectorXd> variants;
  for (Eigen::VectorXd probe : probes) {
    for (int l : linear) probe[l] = 1.0;
    variants.push_back(probe);
    for (int j : candidates) probe[j] = kTypicalWidthShare * span;
    variants.push_back(probe);
  }
  for (int j : candidates) {
    for (const Eigen::VectorXd& probe : variants) {
      if (IsLocationAt(model, data, probe, j, x_min, span)) {
        locations.push_back(j);
        break;
      }
    }
  }
  return locations;
}

int AddPeakCenters(const Dataset& data, const Eigen::VectorXd& signal, int max_peaks,
                   std::vector<SeedPeak>* peaks) {
  if (data.predictors.cols() == 0) return 0;
  const Eigen::VectorXd x = data.predictors.col(0);
  const double span = x.maxCoeff() - x.minCoeff();
  int num_added = 0;
  auto add = [&](const signal::Peak& peak) {
    for (const SeedPeak& known : *peaks) {
      if (std::abs(known.center - peak.center) <= kSameCenterShare * span) return;
    }
    if (static_cast<int>(peaks->size()) >= max_peaks) return;
    peaks->push_back({peak.center, peak.fwhm});
    ++num_added;
  };
  const signal::PreparedCurve curve = signal::SortAndMerge(x, signal);
  if (!curve.IsOk()) return 0;
  for (bool negative : {false, true}) {
    signal::PeakOptions options;
    options.negative = negative;
    options.find_shoulders = true;
    const signal::PeakList found = signal::FindPeaks(curve.x, curve.y, options);
    if (!found.IsOk()) continue;
    for (const signal::Peak& peak : found.peaks) add(peak);
  }
  return num_added;
}

std::vector<std::vector<int>> CenterAssignments(int num_locations, int num_centers,
                                                int max_assignments) {
  std::vector<std::vector<int>> assignments;
  const int num_filled = std::min(num_locations, num_centers);
  std::vector<int> slots(num_locations, -1);
  std::vector<bool> used(num_centers, false);
  std::function<void(int)> fill = [&](int slot) {
    if (static_cast<int>(assignments.size()) >= max_assignments) return;
    if (slot == num_filled) {
      assignments.push_back(slots);
      return;
    }
    for (int c = 0; c < num_centers; ++c) {
      if (used[c]) continue;
      used[c] = true;
      slots[slot] = c;
      fill(slot + 1);
      slots[slot] = -1;
      used[c] = false;
    }
  };
  if (num_filled > 0) fill(0);
  return assignments;
}

}  // namespace generic
}  // namespace foothold
