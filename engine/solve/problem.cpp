#include "engine/solve/problem.h"

#include <cmath>
#include <limits>
#include <sstream>

namespace foothold {

const char* ToString(SigmaMode mode) {
  return mode == SigmaMode::kAbsolute ? "absolute" : "relative";
}

bool SigmaModeFromString(const std::string& text, SigmaMode* mode) {
  if (text == "absolute") {
    *mode = SigmaMode::kAbsolute;
    return true;
  }
  if (text == "relative") {
    *mode = SigmaMode::kRelative;
    return true;
  }
  return false;
}

int Problem::NumFree() const {
  int num_free = 0;
  for (int j = 0; j < NumParameters(); ++j) num_free += IsFixed(j) ? 0 : 1;
  return num_free;
}

double Problem::Lower(int j) const {
  return lower.size() == 0 ? -std::numeric_limits<double>::infinity() : lower[j];
}

double Problem::Upper(int j) const {
  return upper.size() == 0 ? std::numeric_limits<double>::infinity() : upper[j];
}

bool Problem::Validate(std::string* error) const {
  std::ostringstream message;
  const int p = NumParameters();
  if (model == nullptr) {
    message << "problem has no model";
  } else if (static_cast<size_t>(data.predictors.cols()) != model->PredictorNames().size()) {
    message << "the data have " << data.predictors.cols() << " predictor columns but the model reads "
            << model->PredictorNames().size();
  } else if (!data.Validate(error)) {
    return false;
  } else if (lower.size() != 0 && lower.size() != p) {
    message << "lower bounds have " << lower.size() << " entries, expected " << p;
  } else if (upper.size() != 0 && upper.size() != p) {
    message << "upper bounds have " << upper.size() << " entries, expected " << p;
  } else if (!is_fixed.empty() && static_cast<int>(is_fixed.size()) != p) {
    message << "fixed flags have " << is_fixed.size() << " entries, expected " << p;
  } else {
    const auto& names = model->ParameterNames();
    for (int j = 0; j < p && message.tellp() == 0; ++j) {
      if (std::isnan(Lower(j)) || std::isnan(Upper(j))) {
        message << "bounds of '" << names[j] << "' are not numbers";
      } else if (Lower(j) > Upper(j)) {
        message << "bounds of '" << names[j] << "': lower " << Lower(j) << " > upper " << Upper(j);
      }
    }
    if (message.tellp() == 0 && data.NumPoints() < NumFree()) {
      message << data.NumPoints() << " data points but " << NumFree()
              << " free parameters: need at least as many points as free parameters";
    }
  }
  if (message.tellp() == 0) return true;
  if (error) *error = message.str();
  return false;
}

bool Problem::IsInsideBounds(const Eigen::VectorXd& params, std::string* error) const {
  const auto& names = model->ParameterNames();
  for (int j = 0; j < NumParameters(); ++j) {
    if (!std::isfinite(params[j])) {
      if (error) *error = "start of '" + names[j] + "' is not a finite number";
      return false;
    }
    if (params[j] < Lower(j) || params[j] > Upper(j)) {
      if (error) {
        std::ostringstream message;
        message << "start of '" << names[j] << "' = " << params[j] << " lies outside its bounds ["
                << Lower(j) << ", " << Upper(j) << "]";
        *error = message.str();
      }
      return false;
    }
  }
  return true;
}

}  // namespace foothold
