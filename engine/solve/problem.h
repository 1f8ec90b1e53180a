#pragma once
// A least-squares problem: model, data, bounds, fixed parameters and weighting.

#include <Eigen/Core>
#include <string>
#include <vector>

#include "engine/model/dataset.h"
#include "engine/model/model.h"

namespace foothold {

// How sigma enters the covariance (the fit itself always weights by 1/sigma^2).
enum class SigmaMode {
  kAbsolute,  // sigma are true standard deviations: covariance = (J^T W J)^-1.
  kRelative,  // sigma are relative: covariance rescaled by the reduced chi-square.
};
const char* ToString(SigmaMode mode);                      // "absolute" | "relative"
bool SigmaModeFromString(const std::string& text, SigmaMode* mode);

struct Problem {
  // Not owned; must outlive the problem. Used by one thread at a time (Model::Clone).
  const Model* model = nullptr;
  // Predictor columns in the order model->PredictorNames() gives.
  Dataset data;
  // Size p; -inf / +inf where unbounded. Empty means unbounded everywhere.
  Eigen::VectorXd lower;
  Eigen::VectorXd upper;
  // Size p (or empty: nothing fixed). A fixed parameter keeps its start value.
  std::vector<bool> is_fixed;
  // Meaningful only when data.sigma is given; without sigma the covariance is always
  // rescaled by the residual variance.
  SigmaMode sigma_mode = SigmaMode::kAbsolute;

  int NumParameters() const { return model ? model->NumParameters() : 0; }
  int NumFree() const;
  bool IsFixed(int j) const { return !is_fixed.empty() && is_fixed[j]; }
  double Lower(int j) const;
  double Upper(int j) const;
  // Sizes agree, data valid, lower <= upper, at least as many points as free parameters.
  bool Validate(std::string* error) const;
  // True when `params` lies inside the bounds; otherwise names the first offender.
  bool IsInsideBounds(const Eigen::VectorXd& params, std::string* error) const;
};

}  // namespace foothold
