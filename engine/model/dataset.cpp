#include "engine/model/dataset.h"

#include <cmath>
#include <sstream>

namespace foothold {

int Dataset::PredictorIndex(const std::string& name) const {
  for (size_t j = 0; j < predictor_names.size(); ++j) {
    if (predictor_names[j] == name) return static_cast<int>(j);
  }
  return -1;
}

bool Dataset::Validate(std::string* error) const {
  const Eigen::Index n = response.size();
  std::ostringstream message;
  if (predictors.rows() != n) {
    message << "predictors have " << predictors.rows() << " rows but the response has " << n;
  } else if (static_cast<size_t>(predictors.cols()) != predictor_names.size()) {
    message << "predictors have " << predictors.cols() << " columns but "
            << predictor_names.size() << " names";
  } else if (sigma.size() != 0 && sigma.size() != n) {
    message << "sigma has " << sigma.size() << " values but the response has " << n;
  } else {
    for (Eigen::Index i = 0; i < n && message.tellp() == 0; ++i) {
      if (!std::isfinite(response[i])) {
        message << "response row " << i << " is " << response[i] << ": expected a finite number";
      }
      for (Eigen::Index j = 0; j < predictors.cols() && message.tellp() == 0; ++j) {
        if (!std::isfinite(predictors(i, j))) {
          message << "column '" << predictor_names[j] << "' row " << i << " is "
                  << predictors(i, j) << ": expected a finite number";
        }
      }
      if (message.tellp() == 0 && sigma.size() != 0 &&
          !(std::isfinite(sigma[i]) && sigma[i] > 0)) {
        message << "sigma row " << i << " is " << sigma[i] << ": expected a finite number > 0";
      }
    }
  }
  if (message.tellp() == 0) return true;
  if (error) *error = message.str();
  return false;
}

bool Dataset::SelectPredictors(const std::vector<std::string>& names, Dataset* out,
                               std::string* error) const {
  Dataset selected;
  selected.predictor_names = names;
  selected.predictors.resize(response.size(), static_cast<Eigen::Index>(names.size()));
  for (size_t j = 0; j < names.size(); ++j) {
    const int index = PredictorIndex(names[j]);
    if (index < 0) {
      if (error) *error = "the data have no column '" + names[j] + "' that the model reads";
      return false;
    }
    selected.predictors.col(static_cast<Eigen::Index>(j)) = predictors.col(index);
  }
  selected.response = response;
  selected.sigma = sigma;
  *out = std::move(selected);
  return true;
}

}  // namespace foothold
