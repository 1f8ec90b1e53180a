#pragma once
// Growth and scaling laws: power_law, gompertz, arrhenius.

#include <memory>
#include <vector>

#include "engine/model/families/family_model.h"

namespace foothold {

// Gas constant used by arrhenius, J/(mol K): the exact 2019 SI value 8.31446261815324
// (N_A times k_B) to the ten digits the catalogue publishes.
constexpr double kGasConstant = 8.314462618;

// power_law: prefactor*x^exponent. Parameters: prefactor, exponent.
// NaN where x^exponent is not real (x < 0 with a non-integer exponent) or not finite
// (x = 0 with exponent <= 0 in the exponent column). At x < 0 with an integer exponent the
// exponent column is the real part of the complex derivative, prefactor*x^k*ln|x|; it is
// only meaningful with the exponent fixed.
class PowerLawModel final : public FamilyModel {
 public:
  PowerLawModel();
  std::vector<int> LinearParameters() const override { return {0}; }
  std::unique_ptr<Model> Clone() const override;

 protected:
  void Compute(const double* x, int n, const double* params, double* values,
               double* jacobian) const override;
};

// gompertz: asymptote*exp(-exp(displacement - rate*x)).
// Parameters: asymptote, displacement, rate.
class GompertzModel final : public FamilyModel {
 public:
  GompertzModel();
  std::vector<int> LinearParameters() const override { return {0}; }
  std::unique_ptr<Model> Clone() const override;

 protected:
  void Compute(const double* x, int n, const double* params, double* values,
               double* jacobian) const override;
};

// arrhenius: prefactor*exp(-ea/(R*x)), x = absolute temperature in K, ea in J/mol.
// Parameters: prefactor, ea. NaN for x <= 0 (no absolute temperature).
class ArrheniusModel final : public FamilyModel {
 public:
  ArrheniusModel();
  std::vector<int> LinearParameters() const override { return {0}; }
  std::unique_ptr<Model> Clone() const override;

 protected:
  void Compute(const double* x, int n, const double* params, double* values,
               double* jacobian) const override;
};

}  // namespace foothold
