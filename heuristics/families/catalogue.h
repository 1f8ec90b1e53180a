#pragma once
// The family catalogue: one table in code that the CLI, the docs and GET /v1/families use.
// Each family = an engine model + parameter metadata (+ a guesser, heuristics issue).

#include <limits>
#include <memory>
#include <string>
#include <vector>

#include "engine/model/model.h"

namespace foothold {

struct FamilyParameter {
  std::string name;     // API name, e.g. "height"
  std::string meaning;  // one line for people
  double default_lower = -std::numeric_limits<double>::infinity();
  double default_upper = std::numeric_limits<double>::infinity();
};

// What the request names: {"family": "polynomial", "degree": 3}, {"family":
// "multi_gaussian", "peaks": 3 | "auto"}.
struct FamilyRequest {
  std::string name;
  int degree = 2;           // polynomial only; 0..20
  int peaks = 1;            // multi_* only; >= 1 unless auto_peaks
  bool auto_peaks = false;  // multi_* only: choose the count from the data
};

struct FamilyDescription {
  std::string name;
  std::string formula;       // plain text, e.g. "h*exp(-(x-mu)^2/(2*sigma^2)) + b"
  std::string summary;       // what it models, one sentence
  std::string guess_method;  // how starting guesses are made
  // Parameters for the default options (degree 2, one peak).
  std::vector<FamilyParameter> parameters;
  // Request options the family takes: "degree", "peaks", or none.
  std::vector<std::string> options;
  // Names of the parameters the model is linear in, for the default options (taken from
  // the model itself, so the listing cannot disagree with it).
  std::vector<std::string> linear_parameters;
  // The model's symmetries in words, e.g. "peaks may be permuted; canonical order by
  // center"; empty when there are none.
  std::string symmetries;
};

struct FamilyInstance {
  std::unique_ptr<Model> model;
  std::vector<FamilyParameter> parameters;  // same order as model->ParameterNames()
};

// All families, in catalogue order.
const std::vector<FamilyDescription>& FamilyCatalogue();
const FamilyDescription* FindFamily(const std::string& name);
// Builds the model for a request. False with a message naming the field on bad input
// ("unknown family 'gausian' (did you mean 'gaussian'?)", "degree = 40: must be between 0
// and 20"). A request with auto_peaks is refused: the count must first be resolved from
// the data. degree (peaks) different from its default on a family without that option is
// refused as well.
bool InstantiateFamily(const FamilyRequest& request, FamilyInstance* out, std::string* error);

}  // namespace foothold
