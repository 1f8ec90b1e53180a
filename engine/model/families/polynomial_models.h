#pragma once
// Families linear in every parameter: line and polynomial. Variable projection solves them
// in one linear least-squares step.

#include <memory>
#include <vector>

#include "engine/model/families/family_model.h"

namespace foothold {

// line: slope*x + intercept. Parameters: slope, intercept.
class LineModel final : public FamilyModel {
 public:
  LineModel();
  std::vector<int> LinearParameters() const override { return {0, 1}; }
  std::unique_ptr<Model> Clone() const override;

 protected:
  void Compute(const double* x, int n, const double* params, double* values,
               double* jacobian) const override;
};

// polynomial: sum_k c_k x^k for k = 0..degree. Parameters: c0, ..., c<degree>.
class PolynomialModel final : public FamilyModel {
 public:
  // Accepted degrees; the catalogue validates requests against these.
  static constexpr int kMinDegree = 0;
  static constexpr int kMaxDegree = 20;

  explicit PolynomialModel(int degree);
  int Degree() const { return degree_; }
  std::vector<int> LinearParameters() const override;
  std::unique_ptr<Model> Clone() const override;

 protected:
  void Compute(const double* x, int n, const double* params, double* values,
               double* jacobian) const override;

 private:
  int degree_;
};

}  // namespace foothold
