#pragma once
// A cheap form of Dataset::Validate for the guessers' entry points.

#include <string>

#include "engine/model/dataset.h"

namespace foothold {
namespace internal {

// Dataset::Validate composes its message as it scans, at hundreds of instructions a point;
// on a 5000-point series that is a large share of a guess. The same rules are checked here
// with plain loops, and Validate runs only when one fails, to name the column and row.
inline bool ValidateDataset(const Dataset& data, std::string* error) {
  const Eigen::Index n = data.response.size();
  const bool has_valid_sizes =
      data.predictors.rows() == n &&
      static_cast<size_t>(data.predictors.cols()) == data.predictor_names.size() &&
      (data.sigma.size() == 0 || data.sigma.size() == n);
  const bool is_valid =
      has_valid_sizes && data.response.allFinite() && data.predictors.allFinite() &&
      (data.sigma.size() == 0 || (data.sigma.allFinite() && (data.sigma.array() > 0.0).all()));
  return is_valid || data.Validate(error);
}

}  // namespace internal
}  // namespace foothold
