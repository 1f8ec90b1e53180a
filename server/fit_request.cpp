#include "server/fit_request.h"

#include <cmath>
#include <set>
#include <sstream>

namespace foothold {
namespace {

std::string FormatNumber(double value) {
  std::ostringstream out;
  out << value;
  return out.str();
}

bool ValidateModel(const ModelSpec& model, std::string* error) {
  if (model.IsFamily() == !model.expression.empty()) {
    *error = model.IsFamily() ? "model: give either family or expression, not both"
                              : "model: expected a family or an expression";
    return false;
  }
  if (!model.IsFamily()) {
    if (model.degree || model.peaks || model.auto_peaks) {
      *error = "model: degree and peaks belong to a family, not to an expression";
      return false;
    }
    std::set<std::string> seen;
    for (const std::string& name : model.parameters) {
      if (!seen.insert(name).second) {
        *error = "model.parameters: '" + name + "' is listed twice";
        return false;
      }
    }
  } else if (!model.parameters.empty()) {
    *error =
        "model.parameters: a family names its own parameters; give parameters only "
        "with an expression";
    return false;
  }
  return true;
}

bool ValidateNamedValues(const char* field, const std::vector<NamedValue>& values,
                         std::string* error) {
  std::set<std::string> seen;
  for (const NamedValue& entry : values) {
    if (entry.name.empty()) {
      *error = std::string(field) + ": a parameter name is empty";
      return false;
    }
    if (!seen.insert(entry.name).second) {
      *error = std::string(field) + "." + entry.name + " is given twice";
      return false;
    }
    if (!std::isfinite(entry.value)) {
      *error = std::string(field) + "." + entry.name + " = " + FormatNumber(entry.value) +
               ": expected a finite number";
      return false;
    }
  }
  return true;
}

bool ValidateBounds(const std::vector<NamedBounds>& bounds, std::string* error) {
  std::set<std::string> seen;
  for (const NamedBounds& entry : bounds) {
    const std::string field = "bounds." + entry.name;
    if (entry.name.empty()) {
      *error = "bounds: a parameter name is empty";
      return false;
    }
    if (!seen.insert(entry.name).second) {
      *error = field + " is given twice";
      return false;
    }
    if (std::isnan(entry.lower) || std::isnan(entry.upper)) {
      *error = field + ": a bound is not a number";
      return false;
    }
    if (entry.lower > entry.upper) {
      *error =
          field + ": lower " + FormatNumber(entry.lower) + " > upper " + FormatNumber(entry.upper);
      return false;
    }
    if (entry.lower == entry.upper) {
      *error = field + ": lower = upper = " + FormatNumber(entry.lower) +
               "; to hold a parameter constant use fix";
      return false;
    }
  }
  return true;
}

bool ValidateMethodChoices(const FitRequest& request, std::string* error) {
  if (!IsOneOf(request.loss, kKnownLosses)) {
    *error = "loss = '" + request.loss + "': expected one of " + JoinOptions(kKnownLosses);
    return false;
  }
  // loss_scale > 0 fixes the robust scale; <= 0 asks for the automatic one (engine/loss).
  if (!std::isfinite(request.loss_scale)) {
    *error = "loss_scale = " + FormatNumber(request.loss_scale) +
             ": must be a finite number (> 0 fixes the scale, <= 0 means automatic)";
    return false;
  }
  if (!IsOneOf(request.method, kKnownMethods)) {
    *error = "method = '" + request.method + "': expected one of " + JoinOptions(kKnownMethods);
    return false;
  }
  if (!IsOneOf(request.intervals, kKnownIntervals)) {
    *error =
        "intervals = '" + request.intervals + "': expected one of " + JoinOptions(kKnownIntervals);
    return false;
  }
  if (request.sigma_mode != "" && request.sigma_mode != "absolute" &&
      request.sigma_mode != "relative") {
    *error = "sigma_mode = '" + request.sigma_mode + "': expected absolute or relative";
    return false;
  }
  return true;
}

bool ValidateLimits(const FitRequest& request, std::string* error) {
  std::ostringstream message;
  if (request.starts < 0 || request.starts > kMaxStarts) {
    message << "starts = " << request.starts << ": must be between 1 and " << kMaxStarts
            << " (or absent for the automatic budget)";
  } else if (request.threads < 0 || request.threads > kMaxThreads) {
    message << "threads = " << request.threads << ": must be between 1 and " << kMaxThreads;
  } else if (!(request.deadline_seconds > 0)) {
    message << "deadline_seconds = " << request.deadline_seconds << ": must be > 0";
  } else if (request.max_iterations < 0) {
    message << "max_iterations = " << request.max_iterations << ": must be >= 0";
  } else if (request.max_evaluations < 1) {
    message << "max_evaluations = " << request.max_evaluations << ": must be >= 1";
  }
  if (message.tellp() == 0) return true;
  *error = message.str();
  return false;
}

}  // namespace

bool FitRequest::Validate(std::string* error) const {
  if (!ValidateModel(model, error)) return false;
  if (data.IsEmpty() || data.NumRows() == 0) {
    *error = "data: no data rows";
    return false;
  }
  if (response.empty()) {
    *error = "response: expected a column name or an expression in the columns";
    return false;
  }
  return ValidateNamedValues("start", start, error) && ValidateNamedValues("fix", fix, error) &&
         ValidateBounds(bounds, error) && ValidateMethodChoices(*this, error) &&
         ValidateLimits(*this, error);
}

}  // namespace foothold
