#pragma once
// Dose-response and binding families: logistic4, logistic5 (x = log10 concentration),
// michaelis_menten and hill_binding (x = concentration, >= 0).

#include <memory>
#include <vector>

#include "engine/model/families/family_model.h"

namespace foothold {

// logistic4: bottom + (top-bottom)/(1 + 10^((log_ec50 - x)*hill)).
// Parameters: bottom, top, log_ec50, hill. hill > 0 rises from bottom to top with x.
// Symmetry: (bottom, top, hill) ~ (top, bottom, -hill); canonical top >= bottom, so the
// sign of hill gives the direction of the curve (negative: inhibition).
class Logistic4Model final : public FamilyModel {
 public:
  Logistic4Model();
  std::vector<int> LinearParameters() const override { return {0, 1}; }
  void CanonicalizeParameters(double* params, const double* lower,
                              const double* upper) const override;
  std::unique_ptr<Model> Clone() const override;

 protected:
  void Compute(const double* x, int n, const double* params, double* values,
               double* jacobian) const override;
};

// logistic5: bottom + (top-bottom)/(1 + 10^((log_ec50 - x)*hill))^asymmetry.
// Parameters: bottom, top, log_ec50, hill, asymmetry. asymmetry = 1 is logistic4.
class Logistic5Model final : public FamilyModel {
 public:
  Logistic5Model();
  std::vector<int> LinearParameters() const override { return {0, 1}; }
  std::unique_ptr<Model> Clone() const override;

 protected:
  void Compute(const double* x, int n, const double* params, double* values,
               double* jacobian) const override;
};

// michaelis_menten: vmax*x/(km + x). Parameters: vmax, km. km = 0 gives NaN.
class MichaelisMentenModel final : public FamilyModel {
 public:
  MichaelisMentenModel();
  std::vector<int> LinearParameters() const override { return {0}; }
  std::unique_ptr<Model> Clone() const override;

 protected:
  void Compute(const double* x, int n, const double* params, double* values,
               double* jacobian) const override;
};

// hill_binding: bmax*x^n/(kd^n + x^n). Parameters: bmax, kd, n. NaN for x < 0 and kd <= 0.
class HillBindingModel final : public FamilyModel {
 public:
  HillBindingModel();
  std::vector<int> LinearParameters() const override { return {0}; }
  std::unique_ptr<Model> Clone() const override;

 protected:
  void Compute(const double* x, int n, const double* params, double* values,
               double* jacobian) const override;
};

}  // namespace foothold
