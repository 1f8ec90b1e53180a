#pragma once
// The arithmetic of each tape instruction over a run of data points, for values alone
// and for values with forward-mode derivatives. Constant folding evaluates through the
// same functions, so a folded constant is bit-identical to its run-time value.

#include <vector>

#include "engine/model/internal/expression_tape.h"

namespace foothold {
namespace internal {

// An operand's storage: a scalar (one value, scalar derivatives) or `count` values per
// array when is_vector.
struct Operand {
  const double* value = nullptr;
  const double* const* derivatives = nullptr;
  bool is_vector = false;
};

// Writes the instruction's result values. `count` is the number of points when the
// result is a vector and 1 when it is a scalar; a and b follow their is_vector.
void RunValues(const Instruction& instruction, int count, const Operand& a, const Operand& b,
               double* out);

// As RunValues, then one derivative array per instruction.terms entry. `temp_a` and
// `temp_b` are scratch arrays of `count` values.
void RunWithDerivatives(const Instruction& instruction, int count, const Operand& a,
                        const Operand& b, double* out, double* const* out_derivatives,
                        double* temp_a, double* temp_b);

// The instruction's value for scalar operands (b ignored for one-operand instructions).
double EvaluateScalar(const Instruction& instruction, double a, double b);

}  // namespace internal
}  // namespace foothold
