#pragma once
// The compiled form of an expression: a flat list of instructions over slots.
//
// A slot is a constant, a parameter, a data column or the result of one instruction.
// Each slot knows whether it varies over the data points (is_vector) and the sorted set
// of parameters it depends on; forward-mode differentiation carries one derivative per
// dependency, so a slot that depends on one parameter carries one derivative column.
// Parameter-free, column-free sub-trees are folded into constants while lowering.

#include <cstdint>
#include <string>
#include <vector>

#include "engine/model/internal/expression_parser.h"

namespace foothold {
namespace internal {

enum class OpCode : std::uint8_t {
  kAdd,
  kSubtract,
  kMultiply,
  kDivide,
  kNegate,
  kReciprocal,   // 1/a, for dividing a vector by a scalar as a product
  kSquare,       // a^2 as a*a
  kPowInteger,   // a^k, small integer k (also negative), by repeated multiplication
  kPowConstant,  // a^c, any other constant c, std::pow
  kPow,          // a^b, b varies with the data only: std::pow
  kPowExpLog,    // a^b, b depends on parameters: exp(b*log(a))
  kExp,
  kLog,
  kLog10,
  kSqrt,
  kSin,
  kCos,
  kTan,
  kAtan,
  kTanh,
  kAbs,
  kErf,
};

const char* OpCodeName(OpCode op);

enum class SlotKind { kConstant, kParameter, kColumn, kComputed };

struct Slot {
  SlotKind kind = SlotKind::kConstant;
  // True when the value varies over the data points (the slot reads a column).
  bool is_vector = false;
  // kConstant: the value.
  double constant = 0.0;
  // kParameter: parameter index; kColumn: index into the model's predictor columns;
  // kComputed: index of the instruction that writes it.
  int index = -1;
  // Sorted parameter indices this slot depends on, one derivative each.
  std::vector<int> dependencies;
};

// How one derivative of a result combines the operands' derivatives: positions in the
// operands' dependency lists, -1 when that operand does not depend on the parameter.
struct DerivativeTerm {
  int from_a = -1;
  int from_b = -1;
  // A sum whose derivative is one operand's unchanged (d(u + c)/dp = du/dp) takes over that
  // operand's array when the operand dies here: nothing is computed or copied.
  bool is_shared = false;
};

struct Instruction {
  OpCode op = OpCode::kAdd;
  int result = -1;
  int a = -1;
  int b = -1;  // -1 for one-operand instructions
  // kPowConstant: the exponent; kPowInteger: the exponent as an integer.
  double exponent = 0.0;
  int integer_exponent = 0;
  // One per dependency of the result slot, in the same order.
  std::vector<DerivativeTerm> terms;
};

// Where a workspace keeps each slot: vector slots in columns of a scratch matrix (reused
// once a slot is dead), scalar slots in a scalar array.
struct StorageLayout {
  // Per slot: scalar index or first entry in `vector_columns`, -1 for column slots
  // (which point into the data) and for a root written straight into the output.
  std::vector<int> value;
  // Per slot, per dependency: column index, or -1 for scalar slots and for derivatives
  // written straight into a Jacobian column (see output_parameter).
  std::vector<std::vector<int>> derivatives;
  // Per slot, per dependency: the parameter whose Jacobian column holds the derivative
  // (the root's, and those the root takes over through shared sums), else -1.
  std::vector<std::vector<int>> output_parameter;
  int num_columns = 0;
};

struct Tape {
  std::vector<Slot> slots;
  std::vector<Instruction> instructions;
  int root = -1;
  std::vector<std::string> parameter_names;
  // The data columns the expression reads, in the order of the given column names.
  std::vector<std::string> predictor_names;
  // Scalars: constants' values, a 1.0 for parameters' own derivative, parameter values
  // and computed scalar slots. Laid out once; a workspace copies `scalar_init`.
  std::vector<double> scalar_init;
  std::vector<int> scalar_value;                     // per slot, -1 for vector slots
  std::vector<std::vector<int>> scalar_derivatives;  // per slot (scalar slots only)
  // Vector storage for Evaluate() (values only) and for EvaluateWithJacobian().
  StorageLayout values_layout;
  StorageLayout jacobian_layout;
  // True when the root is computed and varies over the points: it is then written
  // directly into the caller's output buffers.
  bool root_in_output = false;

  int NumParameters() const { return static_cast<int>(parameter_names.size()); }
  // One line per instruction, for debugging and tests.
  std::string ToString() const;
};

// Lowers a syntax tree (whose parameters are numbered as the model's) to a tape. With
// `fold_constants`, parameter-free and column-free sub-trees become constants; a folded
// value that is not finite is an error naming its position in `text`.
bool BuildTape(const SyntaxTree& tree, const std::string& text,
               const std::vector<std::string>& column_names, bool fold_constants, Tape* tape,
               std::string* error);

// A maximal set of parameters, greedy in parameter order, in which the expression is
// jointly affine for fixed values of the other parameters.
std::vector<int> FindLinearParameters(const Tape& tape);

}  // namespace internal
}  // namespace foothold
