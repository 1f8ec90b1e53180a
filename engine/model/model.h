#pragma once
// The model interface: values and Jacobian over the whole data vector at once.

#include <Eigen/Core>
#include <memory>
#include <string>
#include <vector>

namespace foothold {

// Permuting whole members (identical peaks) leaves the model unchanged.
// members[g][k] is the index of the k-th parameter of member g; all members have the
// same length. Canonical order sorts members by the parameter at position sort_position.
struct PermutationSymmetry {
  std::vector<std::vector<int>> members;
  int sort_position = 0;
  // Position of the member parameter that is a location on the predictor axis (a peak's
  // center), or -1 when members have none. Multistart re-seats members there.
  int location_position = -1;
};

class Model {
 public:
  virtual ~Model() = default;

  virtual int NumParameters() const = 0;
  virtual const std::vector<std::string>& ParameterNames() const = 0;
  // Predictor columns the model reads, in the column order it expects in `x`.
  virtual const std::vector<std::string>& PredictorNames() const = 0;

  // values[i] = f(x_i; params) for i < x.rows(). `x` is n x PredictorNames().size().
  // Non-finite results are allowed: the solver checks and rejects the step.
  virtual void Evaluate(const Eigen::MatrixXd& x, const double* params, double* values) const = 0;
  // The values as above and the n x p Jacobian, column-major:
  // jacobian[j * n + i] = d f(x_i) / d params[j].
  virtual void EvaluateWithJacobian(const Eigen::MatrixXd& x, const double* params, double* values,
                                    double* jacobian) const = 0;

  // Indices of parameters the model is linear in (for variable projection).
  virtual std::vector<int> LinearParameters() const { return {}; }
  // Symmetries for comparing optima modulo permutations.
  virtual std::vector<PermutationSymmetry> Symmetries() const { return {}; }

  // Maps `params` (size p, in place) to the canonical representative of the parameter
  // vectors that give the same curve by a transformation other than a permutation: a sign
  // that enters squared, a phase modulo 2*pi, an amplitude sign traded for a half-period
  // shift, two plateaus swapped with the slope's sign. A transformation is applied only
  // when every parameter it changes stays inside [lower[j], upper[j]] (size p each, -inf /
  // +inf where unbounded; a fixed parameter has lower = upper = its value), so that the
  // canonical point is a point of the same problem. Non-finite entries are left alone.
  // Equivalent points inside the bounds map to one point up to rounding; the permutation
  // order of Symmetries() is applied afterwards by the caller. Default: no such symmetry.
  virtual void CanonicalizeParameters(double* params, const double* lower,
                                      const double* upper) const {
    (void)params;
    (void)lower;
    (void)upper;
  }

  // A Model may keep scratch buffers, so one instance serves one thread at a time;
  // Clone() gives an independent instance for another thread.
  virtual std::unique_ptr<Model> Clone() const = 0;
};

}  // namespace foothold
