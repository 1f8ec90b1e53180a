#pragma once
// Shared plumbing of the catalogue's closed-form models: one predictor column "x", fixed
// parameter names, and one kernel per family that writes the values and, when asked, the
// analytic Jacobian in a single pass over the data.

#include <Eigen/Core>
#include <string>
#include <vector>

#include "engine/model/model.h"

namespace foothold {

// Family models hold no mutable state: Evaluate and EvaluateWithJacobian are safe to call
// from several threads on one instance (Clone is still provided, as the interface asks).
class FamilyModel : public Model {
 public:
  int NumParameters() const final { return static_cast<int>(parameter_names_.size()); }
  const std::vector<std::string>& ParameterNames() const final { return parameter_names_; }
  const std::vector<std::string>& PredictorNames() const final;

  void Evaluate(const Eigen::MatrixXd& x, const double* params, double* values) const final;
  void EvaluateWithJacobian(const Eigen::MatrixXd& x, const double* params, double* values,
                            double* jacobian) const final;

 protected:
  explicit FamilyModel(std::vector<std::string> parameter_names);

  // The family's kernel over n points x[0..n). `jacobian` is null when only the values are
  // wanted; otherwise it is n x NumParameters(), column-major. Both paths must compute the
  // values with the same expressions so that they agree bit for bit. No heap allocation.
  virtual void Compute(const double* x, int n, const double* params, double* values,
                       double* jacobian) const = 0;

  // Writes NaN to every value and (when not null) every Jacobian entry: the model is
  // undefined at these parameters (a width of exactly 0, a rate constant <= 0).
  void FillNaN(int n, double* values, double* jacobian) const;

 private:
  std::vector<std::string> parameter_names_;
};

namespace family_names {

// "height1", "center1", ..., "baseline" for k peaks whose members are `member_names`.
std::vector<std::string> PeakParameterNames(const std::vector<std::string>& member_names,
                                            int num_peaks);
// "c0", ..., "c<degree>".
std::vector<std::string> PolynomialParameterNames(int degree);

}  // namespace family_names

}  // namespace foothold
