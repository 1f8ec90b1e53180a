#include "engine/model/families/polynomial_models.h"

namespace foothold {

LineModel::LineModel() : FamilyModel({"slope", "intercept"}) {}

std::unique_ptr<Model> LineModel::Clone() const { return std::make_unique<LineModel>(*this); }

void LineModel::Compute(const double* x, int n, const double* params, double* values,
                        double* jacobian) const {
  const double slope = params[0];
  const double intercept = params[1];
  for (int i = 0; i < n; ++i) values[i] = slope * x[i] + intercept;
  if (jacobian == nullptr) return;
  double* d_slope = jacobian;
  double* d_intercept = jacobian + n;
  for (int i = 0; i < n; ++i) {
    d_slope[i] = x[i];
    d_intercept[i] = 1.0;
  }
}

PolynomialModel::PolynomialModel(int degree)
    : FamilyModel(family_names::PolynomialParameterNames(degree)), degree_(degree) {}

std::vector<int> PolynomialModel::LinearParameters() const {
  std::vector<int> all(degree_ + 1);
  for (int k = 0; k <= degree_; ++k) all[k] = k;
  return all;
}

std::unique_ptr<Model> PolynomialModel::Clone() const {
  return std::make_unique<PolynomialModel>(*this);
}

void PolynomialModel::Compute(const double* x, int n, const double* params, double* values,
                              double* jacobian) const {
  // Horner's rule for the values: fewer roundings than summing the powers.
  for (int i = 0; i < n; ++i) {
    double sum = params[degree_];
    for (int k = degree_ - 1; k >= 0; --k) sum = sum * x[i] + params[k];
    values[i] = sum;
  }
  if (jacobian == nullptr) return;
  // Column k is x^k, each built from the previous column by one multiplication.
  for (int i = 0; i < n; ++i) jacobian[i] = 1.0;
  for (int k = 1; k <= degree_; ++k) {
    const double* previous = jacobian + static_cast<long>(k - 1) * n;
    double* column = jacobian + static_cast<long>(k) * n;
    for (int i = 0; i < n; ++i) column[i] = previous[i] * x[i];
  }
}

}  // namespace foothold
