#include "engine/model/internal/expression_tape.h"

#include <algorithm>
#include <cmath>
#include <sstream>

#include "engine/model/internal/expression_kernels.h"

namespace foothold {
namespace internal {
namespace {

// Integer exponents up to this size are evaluated by repeated multiplication (at most
// 2 log2(k) products), larger ones by std::pow.
constexpr int kMaxRepeatedMultiplyExponent = 64;

OpCode FunctionOpCode(Function function) {
  switch (function) {
    case Function::kExp:
      return OpCode::kExp;
    case Function::kLog:
      return OpCode::kLog;
    case Function::kLog10:
      return OpCode::kLog10;
    case Function::kSqrt:
      return OpCode::kSqrt;
    case Function::kSin:
      return OpCode::kSin;
    case Function::kCos:
      return OpCode::kCos;
    case Function::kTan:
      return OpCode::kTan;
    case Function::kAtan:
      return OpCode::kAtan;
    case Function::kTanh:
      return OpCode::kTanh;
    case Function::kAbs:
      return OpCode::kAbs;
    case Function::kErf:
      return OpCode::kErf;
  }
  return OpCode::kExp;
}

std::string FormatNumber(double value) {
  if (std::isnan(value)) return "nan";  // whatever its sign bit, for stable messages
  std::ostringstream out;
  out.precision(17);
  out << value;
  return out.str();
}

class TapeBuilder {
 public:
  TapeBuilder(const std::string& text, bool fold_constants, Tape* tape)
      : text_(text), fold_constants_(fold_constants), tape_(tape) {}

  int Constant(double value) {
    Slot slot;
    slot.kind = SlotKind::kConstant;
    slot.constant = value;
    return AddSlot(slot);
  }

  int Parameter(int index) {
    if (index >= static_cast<int>(parameter_slots_.size())) parameter_slots_.resize(index + 1, -1);
    if (parameter_slots_[index] < 0) {
      Slot slot;
      slot.kind = SlotKind::kParameter;
      slot.index = index;
      slot.dependencies = {index};
      parameter_slots_[index] = AddSlot(slot);
    }
    return parameter_slots_[index];
  }

  int Column(int predictor) {
    if (predictor >= static_cast<int>(column_slots_.size()))
      column_slots_.resize(predictor + 1, -1);
    if (column_slots_[predictor] < 0) {
      Slot slot;
      slot.kind = SlotKind::kColumn;
      slot.is_vector = true;
      slot.index = predictor;
      column_slots_[predictor] = AddSlot(slot);
    }
    return column_slots_[predictor];
  }

  // Emits `instruction` (op and exponent set) on slots a and b, or folds it.
  bool Emit(Instruction instruction, int a, int b, const Node& node, int* slot,
            std::string* error) {
    const Slot& first = tape_->slots[a];
    const Slot* second = b >= 0 ? &tape_->slots[b] : nullptr;
    if (fold_constants_ && first.kind == SlotKind::kConstant &&
        (!second || second->kind == SlotKind::kConstant)) {
      const double value =
          EvaluateScalar(instruction, first.constant, second ? second->constant : 0.0);
      if (!std::isfinite(value)) {
        if (error) {
          *error = "position " + std::to_string(node.begin) + ": the constant '" +
                   text_.substr(node.begin - 1, node.end - node.begin) + "' evaluates to " +
                   FormatNumber(value) + "; expected a finite value";
        }
        return false;
      }
      *slot = Constant(value);
      return true;
    }
    Slot result;
    result.kind = SlotKind::kComputed;
    result.is_vector = first.is_vector || (second && second->is_vector);
    result.index = static_cast<int>(tape_->instructions.size());
    const std::vector<int>& from_a = first.dependencies;
    const std::vector<int> none;
    const std::vector<int>& from_b = second ? second->dependencies : none;
    std::set_union(from_a.begin(), from_a.end(), from_b.begin(), from_b.end(),
                   std::back_inserter(result.dependencies));
    for (int parameter : result.dependencies) {
      DerivativeTerm term;
      term.from_a = PositionOf(from_a, parameter);
      term.from_b = PositionOf(from_b, parameter);
      instruction.terms.push_back(term);
    }
    instruction.a = a;
    instruction.b = b;
    *slot = AddSlot(result);
    instruction.result = *slot;
    tape_->instructions.push_back(instruction);
    return true;
  }

  // a*b and a/b with two rewrites for speed when one side is a scalar and the other a
  // vector: a vector divided by a scalar is multiplied by the scalar's reciprocal (one
  // division instead of n; the product may differ from the quotient in the last bit), and
  // a negated vector factor passes its sign to the scalar factor (exact).
  bool Product(OpCode op, int a, int b, const Node& node, int* slot, std::string* error) {
    Instruction instruction;
    const Slot& divisor = tape_->slots[b];
    // A literal zero divisor keeps the plain division: x/0 is inf at run time, not an
    // error about a constant 1/0 the user never wrote.
    const bool has_reciprocal =
        divisor.kind != SlotKind::kConstant || std::isfinite(1.0 / divisor.constant);
    if (op == OpCode::kDivide && tape_->slots[a].is_vector && !divisor.is_vector &&
        has_reciprocal) {
      instruction.op = OpCode::kReciprocal;
      if (!Emit(instruction, b, -1, node, &b, error)) return false;
      op = OpCode::kMultiply;
    }
    if (op == OpCode::kMultiply) {
      if (!tape_->slots[a].is_vector) std::swap(a, b);
      if (!tape_->slots[b].is_vector && IsNegation(a)) {
        a = tape_->instructions[tape_->slots[a].index].a;
        instruction.op = OpCode::kNegate;
        if (!Emit(instruction, b, -1, node, &b, error)) return false;
      }
    }
    instruction.op = op;
    return Emit(instruction, a, b, node, slot, error);
  }

  // a^b, specialised on a constant exponent: 1 and 0 vanish, 2 squares, 0.5 is sqrt,
  // small integers multiply, other constants use std::pow; a parameter-dependent
  // exponent uses exp(b log a).
  bool Power(int a, int b, const Node& node, int* slot, std::string* error) {
    const Slot& exponent = tape_->slots[b];
    Instruction instruction;
    if (exponent.kind == SlotKind::kConstant) {
      const double c = exponent.constant;
      if (c == 1.0) {
        *slot = a;
        return true;
      }
      if (c == 0.0) {
        *slot = Constant(1.0);  // a^0 = 1 for every a, as std::pow has it.
        return true;
      }
      if (c == 2.0) {
        instruction.op = OpCode::kSquare;
      } else if (c == 0.5) {
        instruction.op = OpCode::kSqrt;
      } else if (c == std::floor(c) && std::fabs(c) <= kMaxRepeatedMultiplyExponent) {
        instruction.op = OpCode::kPowInteger;
        instruction.integer_exponent = static_cast<int>(c);
      } else {
        instruction.op = OpCode::kPowConstant;
      }
      instruction.exponent = c;
      return Emit(instruction, a, -1, node, slot, error);
    }
    instruction.op = exponent.dependencies.empty() ? OpCode::kPow : OpCode::kPowExpLog;
    return Emit(instruction, a, b, node, slot, error);
  }

  void Finish(int root) {
    tape_->root = root;
    RemoveDeadInstructions();
    LayOutScalars();
    const Slot& slot = tape_->slots[root];
    tape_->root_in_output = slot.kind == SlotKind::kComputed && slot.is_vector;
    MarkSharedDerivatives();
    tape_->values_layout = LayOutVectors(false);
    tape_->jacobian_layout = LayOutVectors(true);
  }

 private:
  // The operand slot and dependency position whose array a shared term takes over.
  static std::pair<int, int> SharedSource(const Instruction& instruction, size_t k) {
    const DerivativeTerm& term = instruction.terms[k];
    return term.from_a >= 0 ? std::make_pair(instruction.a, term.from_a)
                            : std::make_pair(instruction.b, term.from_b);
  }

  // The negated operand is read by nothing else (the syntax is a tree), so reading past
  // it leaves the negation dead, and RemoveDeadInstructions drops it.
  bool IsNegation(int s) const {
    const Slot& slot = tape_->slots[s];
    return slot.kind == SlotKind::kComputed &&
           tape_->instructions[slot.index].op == OpCode::kNegate;
  }

  static int PositionOf(const std::vector<int>& sorted, int value) {
    const auto found = std::lower_bound(sorted.begin(), sorted.end(), value);
    return found != sorted.end() && *found == value ? static_cast<int>(found - sorted.begin()) : -1;
  }

  int AddSlot(const Slot& slot) {
    tape_->slots.push_back(slot);
    return static_cast<int>(tape_->slots.size()) - 1;
  }

  // Instructions whose results never reach the root (left behind by a^0) are dropped.
  void RemoveDeadInstructions() {
    std::vector<bool> live(tape_->slots.size(), false);
    live[tape_->root] = true;
    auto& instructions = tape_->instructions;
    for (auto it = instructions.rbegin(); it != instructions.rend(); ++it) {
      if (!live[it->result]) continue;
      live[it->a] = true;
      if (it->b >= 0) live[it->b] = true;
    }
    std::vector<Instruction> kept;
    for (const Instruction& instruction : instructions) {
      if (!live[instruction.result]) continue;
      tape_->slots[instruction.result].index = static_cast<int>(kept.size());
      kept.push_back(instruction);
    }
    instructions = std::move(kept);
    live_ = std::move(live);
  }

  // Scalar 0 holds 1.0, the derivative of a parameter with respect to itself.
  void LayOutScalars() {
    std::vector<double>& init = tape_->scalar_init;
    init.assign(1, 1.0);
    tape_->scalar_value.assign(tape_->slots.size(), -1);
    tape_->scalar_derivatives.assign(tape_->slots.size(), {});
    for (size_t s = 0; s < tape_->slots.size(); ++s) {
      const Slot& slot = tape_->slots[s];
      if (slot.is_vector || !live_[s]) continue;
      tape_->scalar_value[s] = static_cast<int>(init.size());
      init.push_back(slot.kind == SlotKind::kConstant ? slot.constant : 0.0);
      if (slot.kind == SlotKind::kParameter) {
        tape_->scalar_derivatives[s] = {0};
      } else if (slot.kind == SlotKind::kComputed) {
        for (size_t k = 0; k < slot.dependencies.size(); ++k) {
          tape_->scalar_derivatives[s].push_back(static_cast<int>(init.size()));
          init.push_back(0.0);
        }
      }
    }
  }

  // Finds the sums that take over an operand's derivative array: + from either side and
  // - from its left, when the operand is a computed vector that nothing reads later (the
  // syntax is a tree, so its only reader is this sum).
  void MarkSharedDerivatives() {
    const auto& slots = tape_->slots;
    for (Instruction& instruction : tape_->instructions) {
      if (instruction.op != OpCode::kAdd && instruction.op != OpCode::kSubtract) continue;
      if (!slots[instruction.result].is_vector || instruction.a == instruction.b) continue;
      for (DerivativeTerm& term : instruction.terms) {
        if (term.from_a >= 0 && term.from_b < 0) {
          term.is_shared = IsComputedVector(instruction.a);
        } else if (term.from_b >= 0 && term.from_a < 0 && instruction.op == OpCode::kAdd) {
          term.is_shared = IsComputedVector(instruction.b);
        }
      }
    }
  }

  bool IsComputedVector(int s) const {
    return tape_->slots[s].kind == SlotKind::kComputed && tape_->slots[s].is_vector;
  }

  // Assigns scratch columns to computed vector slots, reusing a slot's columns after its
  // last reader (never for the reader's own result, so no kernel reads what it writes).
  StorageLayout LayOutVectors(bool with_derivatives) const {
    const auto& slots = tape_->slots;
    const auto& instructions = tape_->instructions;
    std::vector<int> last_use(slots.size(), -1);
    for (size_t i = 0; i < instructions.size(); ++i) {
      last_use[instructions[i].a] = static_cast<int>(i);
      if (instructions[i].b >= 0) last_use[instructions[i].b] = static_cast<int>(i);
    }
    StorageLayout layout;
    layout.value.assign(slots.size(), -1);
    layout.derivatives.assign(slots.size(), {});
    layout.output_parameter.assign(slots.size(), {});
    for (size_t s = 0; s < slots.size(); ++s) {
      layout.derivatives[s].assign(with_derivatives ? slots[s].dependencies.size() : 0, -1);
      layout.output_parameter[s].assign(layout.derivatives[s].size(), -1);
    }
    if (with_derivatives && tape_->root_in_output) {
      // The root's derivatives are Jacobian columns, and so are those it takes over,
      // followed from the root back through the shared sums.
      layout.output_parameter[tape_->root] = slots[tape_->root].dependencies;
      for (auto it = instructions.rbegin(); it != instructions.rend(); ++it) {
        for (size_t k = 0; k < it->terms.size(); ++k) {
          const int parameter = layout.output_parameter[it->result][k];
          if (!it->terms[k].is_shared || parameter < 0) continue;
          const auto [source, index] = SharedSource(*it, k);
          layout.output_parameter[source][index] = parameter;
        }
      }
    }
    std::vector<int> free_columns;
    const auto take = [&]() {
      if (free_columns.empty()) return layout.num_columns++;
      const int column = free_columns.back();
      free_columns.pop_back();
      return column;
    };
    // Columns handed on to a shared sum's result are not released with their first owner.
    std::vector<std::vector<bool>> handed_on(slots.size());
    for (size_t s = 0; s < slots.size(); ++s) {
      handed_on[s].assign(layout.derivatives[s].size(), false);
    }
    const auto release = [&](int s) {
      if (!IsComputedVector(s)) return;
      if (layout.value[s] >= 0) free_columns.push_back(layout.value[s]);
      for (size_t k = 0; k < layout.derivatives[s].size(); ++k) {
        if (layout.derivatives[s][k] >= 0 && !handed_on[s][k]) {
          free_columns.push_back(layout.derivatives[s][k]);
        }
      }
    };
    for (size_t i = 0; i < instructions.size(); ++i) {
      const Instruction& instruction = instructions[i];
      const int r = instruction.result;
      if (slots[r].is_vector) {
        if (!(tape_->root_in_output && r == tape_->root)) layout.value[r] = take();
        for (size_t k = 0; k < layout.derivatives[r].size(); ++k) {
          if (instruction.terms[k].is_shared) {
            const auto [source, index] = SharedSource(instruction, k);
            layout.derivatives[r][k] = layout.derivatives[source][index];
            handed_on[source][index] = true;
          } else if (layout.output_parameter[r][k] < 0) {
            layout.derivatives[r][k] = take();
          }
        }
      }
      if (last_use[instruction.a] == static_cast<int>(i)) release(instruction.a);
      if (instruction.b >= 0 && instruction.b != instruction.a &&
          last_use[instruction.b] == static_cast<int>(i)) {
        release(instruction.b);
      }
    }
    return layout;
  }

  const std::string& text_;
  const bool fold_constants_;
  Tape* tape_;
  std::vector<int> parameter_slots_;
  std::vector<int> column_slots_;
  std::vector<bool> live_;
};

// Degree of a slot in the candidate set: 0 independent of it, 1 affine, 2 beyond affine.
int Degree(OpCode op, int a, int b) {
  switch (op) {
    case OpCode::kAdd:
    case OpCode::kSubtract:
      return std::max(a, b);
    case OpCode::kNegate:
      return a;
    case OpCode::kMultiply:
      if (a == 0) return b;
      if (b == 0) return a;
      return 2;
    case OpCode::kDivide:
      return b == 0 ? a : 2;
    case OpCode::kPow:
    case OpCode::kPowExpLog:
      return a == 0 && b == 0 ? 0 : 2;
    default:
      return a == 0 ? 0 : 2;  // Functions and constant powers of a non-constant.
  }
}

bool IsJointlyAffine(const Tape& tape, const std::vector<bool>& in_set) {
  std::vector<int> degree(tape.slots.size(), 0);
  for (size_t s = 0; s < tape.slots.size(); ++s) {
    const Slot& slot = tape.slots[s];
    if (slot.kind == SlotKind::kParameter && in_set[slot.index]) degree[s] = 1;
  }
  for (const Instruction& instruction : tape.instructions) {
    degree[instruction.result] = Degree(instruction.op, degree[instruction.a],
                                        instruction.b >= 0 ? degree[instruction.b] : 0);
  }
  return degree[tape.root] <= 1;
}

}  // namespace

const char* OpCodeName(OpCode op) {
  switch (op) {
    case OpCode::kAdd:
      return "add";
    case OpCode::kSubtract:
      return "sub";
    case OpCode::kMultiply:
      return "mul";
    case OpCode::kDivide:
      return "div";
    case OpCode::kNegate:
      return "neg";
    case OpCode::kReciprocal:
      return "recip";
    case OpCode::kSquare:
      return "square";
    case OpCode::kPowInteger:
      return "powi";
    case OpCode::kPowConstant:
      return "powc";
    case OpCode::kPow:
      return "pow";
    case OpCode::kPowExpLog:
      return "pow_explog";
    case OpCode::kExp:
      return "exp";
    case OpCode::kLog:
      return "log";
    case OpCode::kLog10:
      return "log10";
    case OpCode::kSqrt:
      return "sqrt";
    case OpCode::kSin:
      return "sin";
    case OpCode::kCos:
      return "cos";
    case OpCode::kTan:
      return "tan";
    case OpCode::kAtan:
      return "atan";
    case OpCode::kTanh:
      return "tanh";
    case OpCode::kAbs:
      return "abs";
    case OpCode::kErf:
      return "erf";
  }
  return "?";
}

std::string Tape::ToString() const {
  std::ostringstream out;
  const auto name = [this](int s) {
    const Slot& slot = slots[s];
    switch (slot.kind) {
      case SlotKind::kConstant:
        return FormatNumber(slot.constant);
      case SlotKind::kParameter:
        return parameter_names[slot.index];
      case SlotKind::kColumn:
        return predictor_names[slot.index];
      case SlotKind::kComputed:
        return "t" + std::to_string(slot.index);
    }
    return std::string("?");
  };
  for (const Instruction& instruction : instructions) {
    const Slot& result = slots[instruction.result];
    out << name(instruction.result) << " = " << OpCodeName(instruction.op) << " "
        << name(instruction.a);
    if (instruction.b >= 0) out << " " << name(instruction.b);
    if (instruction.op == OpCode::kPowInteger || instruction.op == OpCode::kPowConstant) {
      out << " " << FormatNumber(instruction.exponent);
    }
    out << (result.is_vector ? "  [vector]" : "  [scalar]");
    if (!result.dependencies.empty()) {
      out << " d/d{";
      for (size_t k = 0; k < result.dependencies.size(); ++k) {
        out << (k ? "," : "") << parameter_names[result.dependencies[k]];
      }
      out << "}";
    }
    out << "\n";
  }
  out << "result " << name(root) << "\n";
  return out.str();
}

bool BuildTape(const SyntaxTree& tree, const std::string& text,
               const std::vector<std::string>& column_names, bool fold_constants, Tape* tape,
               std::string* error) {
  *tape = Tape();
  tape->parameter_names = tree.parameter_names;
  // Predictors are the columns read, in the caller's column order.
  std::vector<int> predictor_of(column_names.size(), -1);
  for (const Node& node : tree.nodes) {
    if (node.kind == NodeKind::kColumn) predictor_of[node.index] = 0;
  }
  for (size_t c = 0; c < column_names.size(); ++c) {
    if (predictor_of[c] < 0) continue;
    predictor_of[c] = static_cast<int>(tape->predictor_names.size());
    tape->predictor_names.push_back(column_names[c]);
  }

  TapeBuilder builder(text, fold_constants, tape);
  std::vector<int> slot_of(tree.nodes.size(), -1);
  for (size_t i = 0; i < tree.nodes.size(); ++i) {
    const Node& node = tree.nodes[i];
    const int a = node.left >= 0 ? slot_of[node.left] : -1;
    const int b = node.right >= 0 ? slot_of[node.right] : -1;
    Instruction instruction;
    bool ok = true;
    switch (node.kind) {
      case NodeKind::kConstant:
        slot_of[i] = builder.Constant(node.value);
        break;
      case NodeKind::kParameter:
        slot_of[i] = builder.Parameter(node.index);
        break;
      case NodeKind::kColumn:
        slot_of[i] = builder.Column(predictor_of[node.index]);
        break;
      case NodeKind::kPower:
        ok = builder.Power(a, b, node, &slot_of[i], error);
        break;
      case NodeKind::kNegate:
      case NodeKind::kFunction:
        instruction.op =
            node.kind == NodeKind::kNegate ? OpCode::kNegate : FunctionOpCode(node.function);
        ok = builder.Emit(instruction, a, -1, node, &slot_of[i], error);
        break;
      case NodeKind::kMultiply:
        ok = builder.Product(OpCode::kMultiply, a, b, node, &slot_of[i], error);
        break;
      case NodeKind::kDivide:
        ok = builder.Product(OpCode::kDivide, a, b, node, &slot_of[i], error);
        break;
      default:
        instruction.op = node.kind == NodeKind::kAdd ? OpCode::kAdd : OpCode::kSubtract;
        ok = builder.Emit(instruction, a, b, node, &slot_of[i], error);
    }
    if (!ok) return false;
  }
  builder.Finish(slot_of[tree.Root()]);
  return true;
}

std::vector<int> FindLinearParameters(const Tape& tape) {
  const Slot& root = tape.slots[tape.root];
  std::vector<bool> in_set(tape.NumParameters(), false);
  std::vector<int> linear;
  // Parameters the result does not depend on carry no information and are left out.
  for (int parameter : root.dependencies) {
    in_set[parameter] = true;
    if (IsJointlyAffine(tape, in_set)) {
      linear.push_back(parameter);
    } else {
      in_set[parameter] = false;
    }
  }
  return linear;
}

}  // namespace internal
}  // namespace foothold
