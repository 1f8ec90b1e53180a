#pragma once
// Scratch storage and the evaluation loop for one tape. One workspace per model instance
// (and so per thread); it is sized once per number of points, after which evaluation
// allocates nothing.

#include <Eigen/Core>
#include <vector>

#include "engine/model/internal/expression_tape.h"

namespace foothold {
namespace internal {

class TapeWorkspace {
 public:
  explicit TapeWorkspace(const Tape& tape);

  // values[i] = f(x_i) for i < x.rows(); no derivatives are computed.
  void Evaluate(const Tape& tape, const Eigen::MatrixXd& x, const double* params, double* values);
  // Values and the column-major n x p Jacobian.
  void EvaluateWithJacobian(const Tape& tape, const Eigen::MatrixXd& x, const double* params,
                            double* values, double* jacobian);

 private:
  // Allocates the scratch columns for n points and points the slots at them.
  void Resize(const Tape& tape, int n);
  // Loads parameter values and points column slots at the data.
  void Bind(const Tape& tape, const Eigen::MatrixXd& x, const double* params);

  int num_points_ = -1;
  // Constants, parameters and scalar intermediates; never resized, so pointers stay valid.
  std::vector<double> scalars_;
  // n x (layout columns + 2 scratch columns for slopes).
  Eigen::MatrixXd value_columns_;
  Eigen::MatrixXd jacobian_columns_;
  // Per slot: where its value lives in Evaluate() and in EvaluateWithJacobian(), and
  // where its derivatives live.
  std::vector<double*> value_pointers_;
  std::vector<double*> jacobian_value_pointers_;
  std::vector<std::vector<double*>> derivative_pointers_;
  // (slot, parameter) and (slot, predictor column) pairs of the live slots.
  std::vector<std::pair<int, int>> parameter_slots_;
  std::vector<std::pair<int, int>> column_slots_;
  // Derivatives written straight into the caller's Jacobian: (slot, position, parameter).
  struct OutputDerivative {
    int slot;
    int index;
    int parameter;
  };
  std::vector<OutputDerivative> output_derivatives_;
  // Parameters the result does not depend on (left behind by a^0): zero Jacobian columns.
  std::vector<int> constant_parameters_;
};

}  // namespace internal
}  // namespace foothold
