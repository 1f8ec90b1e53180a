#pragma once
// Relaxation families: exp_decay, biexp_decay, stretched_exp. Time constants tau are
// lifetimes (same unit as x); tau = 0 leaves the model undefined and gives NaN.

#include <memory>
#include <vector>

#include "engine/model/families/family_model.h"

namespace foothold {

// exp_decay: amplitude*exp(-x/tau) + baseline. Parameters: amplitude, tau, baseline.
class ExpDecayModel final : public FamilyModel {
 public:
  ExpDecayModel();
  std::vector<int> LinearParameters() const override { return {0, 2}; }
  std::unique_ptr<Model> Clone() const override;

 protected:
  void Compute(const double* x, int n, const double* params, double* values,
               double* jacobian) const override;
};

// biexp_decay: amplitude1*exp(-x/tau1) + amplitude2*exp(-x/tau2) + baseline.
// Parameters: amplitude1, tau1, amplitude2, tau2, baseline.
// Symmetry: (amplitude1, tau1) <-> (amplitude2, tau2); canonical order sorts by tau.
class BiexpDecayModel final : public FamilyModel {
 public:
  BiexpDecayModel();
  std::vector<int> LinearParameters() const override { return {0, 2, 4}; }
  std::vector<PermutationSymmetry> Symmetries() const override;
  std::unique_ptr<Model> Clone() const override;

 protected:
  void Compute(const double* x, int n, const double* params, double* values,
               double* jacobian) const override;
};

// stretched_exp (Kohlrausch): amplitude*exp(-(x/tau)^beta) + baseline.
// Parameters: amplitude, tau, beta, baseline. Defined for x >= 0 (NaN for x < 0, where a
// non-integer power of a negative number is not real).
class StretchedExpModel final : public FamilyModel {
 public:
  StretchedExpModel();
  std::vector<int> LinearParameters() const override { return {0, 3}; }
  std::unique_ptr<Model> Clone() const override;

 protected:
  void Compute(const double* x, int n, const double* params, double* values,
               double* jacobian) const override;
};

}  // namespace foothold
