#include "engine/model/families/family_model.h"

#include <cstdio>
#include <cstdlib>
#include <limits>
#include <utility>

namespace foothold {
namespace {

// A broken invariant between layers (the caller passed the wrong predictor matrix): abort.
// An empty matrix has nothing to evaluate, whatever its column count.
void CheckOneColumn(const Eigen::MatrixXd& x) {
  if (x.cols() != 1 && x.rows() > 0) {
    std::fprintf(stderr, "foothold: family model expects 1 predictor column, got %ld\n",
                 static_cast<long>(x.cols()));
    std::abort();
  }
}

}  // namespace

FamilyModel::FamilyModel(std::vector<std::string> parameter_names)
    : parameter_names_(std::move(parameter_names)) {}

const std::vector<std::string>& FamilyModel::PredictorNames() const {
  static const std::vector<std::string> kPredictors = {"x"};
  return kPredictors;
}

void FamilyModel::Evaluate(const Eigen::MatrixXd& x, const double* params, double* values) const {
  CheckOneColumn(x);
  Compute(x.data(), static_cast<int>(x.rows()), params, values, nullptr);
}

void FamilyModel::EvaluateWithJacobian(const Eigen::MatrixXd& x, const double* params,
                                       double* values, double* jacobian) const {
  CheckOneColumn(x);
  Compute(x.data(), static_cast<int>(x.rows()), params, values, jacobian);
}

void FamilyModel::FillNaN(int n, double* values, double* jacobian) const {
  const double nan = std::numeric_limits<double>::quiet_NaN();
  for (int i = 0; i < n; ++i) values[i] = nan;
  if (jacobian == nullptr) return;
  const long size = static_cast<long>(n) * NumParameters();
  for (long k = 0; k < size; ++k) jacobian[k] = nan;
}

namespace family_names {

std::vector<std::string> PeakParameterNames(const std::vector<std::string>& member_names,
                                            int num_peaks) {
  std::vector<std::string> names;
  names.reserve(member_names.size() * num_peaks + 1);
  for (int peak = 1; peak <= num_peaks; ++peak) {
    for (const std::string& member : member_names) names.push_back(member + std::to_string(peak));
  }
  names.push_back("baseline");
  return names;
}

std::vector<std::string> PolynomialParameterNames(int degree) {
  std::vector<std::string> names;
  names.reserve(degree + 1);
  for (int k = 0; k <= degree; ++k) names.push_back("c" + std::to_string(k));
  return names;
}

}  // namespace family_names
}  // namespace foothold
