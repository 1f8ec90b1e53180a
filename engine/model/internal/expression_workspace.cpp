#include "engine/model/internal/expression_workspace.h"

#include <algorithm>
#include <cstdio>
#include <cstdlib>

#include "engine/model/internal/expression_kernels.h"

namespace foothold {
namespace internal {
namespace {

// A broken invariant between layers (the caller passed the wrong shape): abort loudly.
void CheckShape(const Tape& tape, const Eigen::MatrixXd& x) {
  if (x.cols() == static_cast<Eigen::Index>(tape.predictor_names.size())) return;
  std::fprintf(stderr, "expression model: x has %ld columns but the model reads %zu\n",
               static_cast<long>(x.cols()), tape.predictor_names.size());
  std::abort();
}

constexpr int kNumScratchColumns = 2;

}  // namespace

TapeWorkspace::TapeWorkspace(const Tape& tape) : scalars_(tape.scalar_init) {
  const size_t num_slots = tape.slots.size();
  value_pointers_.assign(num_slots, nullptr);
  jacobian_value_pointers_.assign(num_slots, nullptr);
  derivative_pointers_.assign(num_slots, {});
  for (size_t s = 0; s < num_slots; ++s) {
    const Slot& slot = tape.slots[s];
    derivative_pointers_[s].assign(slot.dependencies.size(), nullptr);
    if (tape.scalar_value[s] >= 0) {
      value_pointers_[s] = jacobian_value_pointers_[s] = &scalars_[tape.scalar_value[s]];
      for (size_t k = 0; k < tape.scalar_derivatives[s].size(); ++k) {
        derivative_pointers_[s][k] = &scalars_[tape.scalar_derivatives[s][k]];
      }
      if (slot.kind == SlotKind::kParameter) {
        parameter_slots_.emplace_back(static_cast<int>(s), slot.index);
      }
    } else if (slot.kind == SlotKind::kColumn) {
      column_slots_.emplace_back(static_cast<int>(s), slot.index);
    }
  }
  const std::vector<std::vector<int>>& outputs = tape.jacobian_layout.output_parameter;
  for (size_t s = 0; s < outputs.size(); ++s) {
    for (size_t k = 0; k < outputs[s].size(); ++k) {
      if (outputs[s][k] >= 0) {
        output_derivatives_.push_back({static_cast<int>(s), static_cast<int>(k), outputs[s][k]});
      }
    }
  }
  const std::vector<int>& used = tape.slots[tape.root].dependencies;
  for (int j = 0; j < tape.NumParameters(); ++j) {
    if (!std::binary_search(used.begin(), used.end(), j)) constant_parameters_.push_back(j);
  }
}

void TapeWorkspace::Resize(const Tape& tape, int n) {
  if (n == num_points_) return;
  num_points_ = n;
  const Eigen::Index rows = std::max(n, 1);
  value_columns_.resize(rows, tape.values_layout.num_columns + kNumScratchColumns);
  jacobian_columns_.resize(rows, tape.jacobian_layout.num_columns + kNumScratchColumns);
  for (size_t s = 0; s < tape.slots.size(); ++s) {
    if (tape.values_layout.value[s] >= 0) {
      value_pointers_[s] = value_columns_.col(tape.values_layout.value[s]).data();
    }
    if (tape.jacobian_layout.value[s] >= 0) {
      jacobian_value_pointers_[s] = jacobian_columns_.col(tape.jacobian_layout.value[s]).data();
      const std::vector<int>& columns = tape.jacobian_layout.derivatives[s];
      for (size_t k = 0; k < columns.size(); ++k) {
        if (columns[k] >= 0) derivative_pointers_[s][k] = jacobian_columns_.col(columns[k]).data();
      }
    }
  }
}

void TapeWorkspace::Bind(const Tape& tape, const Eigen::MatrixXd& x, const double* params) {
  for (const auto& [slot, parameter] : parameter_slots_) {
    scalars_[tape.scalar_value[slot]] = params[parameter];
  }
  for (const auto& [slot, column] : column_slots_) {
    // Column slots are only ever read; the cast lets them share the pointer tables.
    double* data = const_cast<double*>(x.col(column).data());
    value_pointers_[slot] = jacobian_value_pointers_[slot] = data;
  }
}

void TapeWorkspace::Evaluate(const Tape& tape, const Eigen::MatrixXd& x, const double* params,
                             double* values) {
  CheckShape(tape, x);
  const int n = static_cast<int>(x.rows());
  if (n == 0) return;
  Resize(tape, n);
  Bind(tape, x, params);
  if (tape.root_in_output) value_pointers_[tape.root] = values;
  Operand a;
  Operand b;
  for (const Instruction& instruction : tape.instructions) {
    a.value = value_pointers_[instruction.a];
    a.is_vector = tape.slots[instruction.a].is_vector;
    if (instruction.b >= 0) {
      b.value = value_pointers_[instruction.b];
      b.is_vector = tape.slots[instruction.b].is_vector;
    }
    const int count = tape.slots[instruction.result].is_vector ? n : 1;
    RunValues(instruction, count, a, b, value_pointers_[instruction.result]);
  }
  if (tape.root_in_output) return;
  const double* root = value_pointers_[tape.root];
  if (tape.slots[tape.root].is_vector) {
    std::copy(root, root + n, values);
  } else {
    std::fill(values, values + n, *root);
  }
}

void TapeWorkspace::EvaluateWithJacobian(const Tape& tape, const Eigen::MatrixXd& x,
                                         const double* params, double* values, double* jacobian) {
  CheckShape(tape, x);
  const int n = static_cast<int>(x.rows());
  if (n == 0) return;
  Resize(tape, n);
  Bind(tape, x, params);
  const Slot& root_slot = tape.slots[tape.root];
  std::vector<double*>& root_derivatives = derivative_pointers_[tape.root];
  if (tape.root_in_output) jacobian_value_pointers_[tape.root] = values;
  for (const OutputDerivative& output : output_derivatives_) {
    derivative_pointers_[output.slot][output.index] =
        jacobian + static_cast<size_t>(output.parameter) * n;
  }
  const int num_columns = tape.jacobian_layout.num_columns;
  double* temp_a = jacobian_columns_.col(num_columns).data();
  double* temp_b = jacobian_columns_.col(num_columns + 1).data();
  Operand a;
  Operand b;
  for (const Instruction& instruction : tape.instructions) {
    a.value = jacobian_value_pointers_[instruction.a];
    a.derivatives = derivative_pointers_[instruction.a].data();
    a.is_vector = tape.slots[instruction.a].is_vector;
    if (instruction.b >= 0) {
      b.value = jacobian_value_pointers_[instruction.b];
      b.derivatives = derivative_pointers_[instruction.b].data();
      b.is_vector = tape.slots[instruction.b].is_vector;
    }
    const int r = instruction.result;
    const int count = tape.slots[r].is_vector ? n : 1;
    RunWithDerivatives(instruction, count, a, b, jacobian_value_pointers_[r],
                       derivative_pointers_[r].data(), temp_a, temp_b);
  }
  // Columns of parameters the result does not depend on are zero.
  for (int j : constant_parameters_) {
    std::fill(jacobian + static_cast<size_t>(j) * n, jacobian + static_cast<size_t>(j + 1) * n,
              0.0);
  }
  if (tape.root_in_output) return;
  // A root that is a data column, a parameter or a scalar is copied or broadcast.
  const double* root = jacobian_value_pointers_[tape.root];
  if (root_slot.is_vector) {
    std::copy(root, root + n, values);
  } else {
    std::fill(values, values + n, *root);
  }
  for (size_t k = 0; k < root_slot.dependencies.size(); ++k) {
    double* column = jacobian + static_cast<size_t>(root_slot.dependencies[k]) * n;
    std::fill(column, column + n, *root_derivatives[k]);
  }
}

}  // namespace internal
}  // namespace foothold
