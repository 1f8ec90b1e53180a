#pragma once
// Oscillation families: sine and damped_sine, with the frequency in cycles per unit of x.
// Besides permutations these have symmetries the PermutationSymmetry type cannot state:
// phase + 2*pi is the same curve, and (amplitude, phase) ~ (-amplitude, phase + pi).

#include <memory>
#include <vector>

#include "engine/model/families/family_model.h"

namespace foothold {

// sine: amplitude*sin(2*pi*frequency*x + phase) + baseline.
// Parameters: amplitude, frequency, phase, baseline.
class SineModel final : public FamilyModel {
 public:
  SineModel();
  std::vector<int> LinearParameters() const override { return {0, 3}; }
  std::unique_ptr<Model> Clone() const override;

 protected:
  void Compute(const double* x, int n, const double* params, double* values,
               double* jacobian) const override;
};

// damped_sine: amplitude*exp(-x/tau)*sin(2*pi*frequency*x + phase) + baseline.
// Parameters: amplitude, tau, frequency, phase, baseline. tau = 0 gives NaN.
class DampedSineModel final : public FamilyModel {
 public:
  DampedSineModel();
  std::vector<int> LinearParameters() const override { return {0, 4}; }
  std::unique_ptr<Model> Clone() const override;

 protected:
  void Compute(const double* x, int n, const double* params, double* values,
               double* jacobian) const override;
};

}  // namespace foothold
