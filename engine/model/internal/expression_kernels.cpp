#include "engine/model/internal/expression_kernels.h"

#include <cmath>
#include <type_traits>

namespace foothold {
namespace internal {
namespace {

constexpr double kLn10 = 2.302585092994045684017991454684364208;
// 2/sqrt(pi), the factor in d erf(a)/da = 2/sqrt(pi) exp(-a^2) (Abramowitz & Stegun 7.1.19).
constexpr double kTwoOverSqrtPi = 1.128379167095512573896158903121545172;

// Reads operand values: a scalar is loaded once into a register, a vector is indexed.
template <bool kScalar>
struct In {
  explicit In(const double* pointer) : p(pointer), s(kScalar ? *pointer : 0.0) {}
  double operator[](int i) const { return kScalar ? s : p[i]; }
  const double* p;
  double s;
};

// a^k by binary powering; exact for small k up to rounding of the products, and correct
// for negative a (the sign follows the parity of k).
inline double IntegerPower(double a, int k) {
  const bool negative = k < 0;
  unsigned e = negative ? static_cast<unsigned>(-k) : static_cast<unsigned>(k);
  double result = 1.0;
  double base = a;
  while (e != 0) {
    if (e & 1u) result *= base;
    base *= base;
    e >>= 1;
  }
  return negative ? 1.0 / result : result;
}

// d(a^c)/da = c a^(c-1); written as c v / a to reuse v, except at a = 0 where that is 0/0.
inline double PowerSlope(double a, double c, double v) {
  return a != 0.0 ? c * v / a : c * std::pow(a, c - 1.0);
}
// d(a^b)/db = a^b log(a); its limit at v = 0 (a = 0, b > 0) is 0.
inline double PowerExponentSlope(double a, double v) { return v != 0.0 ? v * std::log(a) : 0.0; }

// Two-operand arithmetic: value V and partials Pa = df/da, Pb = df/db given v = f(a, b).
struct AddOp {
  static double V(double a, double b) { return a + b; }
  static double Pa(double, double, double) { return 1.0; }
  static double Pb(double, double, double) { return 1.0; }
};
struct SubtractOp {
  static double V(double a, double b) { return a - b; }
  static double Pa(double, double, double) { return 1.0; }
  static double Pb(double, double, double) { return -1.0; }
};
struct MultiplyOp {
  static double V(double a, double b) { return a * b; }
  static double Pa(double, double b, double) { return b; }
  static double Pb(double a, double, double) { return a; }
};
// Its derivatives are in DivideKernel.
struct DivideOp {
  static double V(double a, double b) { return a / b; }
};

// One-operand functions: value V and slope G = df/da given v = f(a).
struct NegateOp {
  double V(double a) const { return -a; }
  double G(double, double) const { return -1.0; }
};
struct ReciprocalOp {
  double V(double a) const { return 1.0 / a; }
  double G(double, double v) const { return -v * v; }
};
struct SquareOp {
  double V(double a) const { return a * a; }
  double G(double a, double) const { return 2.0 * a; }
};
struct PowIntegerOp {
  int k;
  double V(double a) const { return IntegerPower(a, k); }
  double G(double a, double) const { return k * IntegerPower(a, k - 1); }
};
struct PowConstantOp {
  double c;
  double V(double a) const { return std::pow(a, c); }
  double G(double a, double v) const { return PowerSlope(a, c, v); }
};
struct ExpOp {
  double V(double a) const { return std::exp(a); }
  double G(double, double v) const { return v; }
};
struct LogOp {
  double V(double a) const { return std::log(a); }
  double G(double a, double) const { return 1.0 / a; }
};
struct Log10Op {
  double V(double a) const { return std::log10(a); }
  double G(double a, double) const { return 1.0 / (kLn10 * a); }
};
struct SqrtOp {
  double V(double a) const { return std::sqrt(a); }
  double G(double, double v) const { return 0.5 / v; }
};
struct SinOp {
  double V(double a) const { return std::sin(a); }
  double G(double a, double) const { return std::cos(a); }
};
struct CosOp {
  double V(double a) const { return std::cos(a); }
  double G(double a, double) const { return -std::sin(a); }
};
struct TanOp {
  double V(double a) const { return std::tan(a); }
  double G(double, double v) const { return 1.0 + v * v; }
};
struct AtanOp {
  double V(double a) const { return std::atan(a); }
  double G(double a, double) const { return 1.0 / (1.0 + a * a); }
};
struct TanhOp {
  double V(double a) const { return std::tanh(a); }
  double G(double, double v) const { return 1.0 - v * v; }
};
// |a| has no derivative at 0; the subgradient 0 is used there.
struct AbsOp {
  double V(double a) const { return std::fabs(a); }
  double G(double a, double) const { return a > 0.0 ? 1.0 : (a < 0.0 ? -1.0 : 0.0); }
};
struct ErfOp {
  double V(double a) const { return std::erf(a); }
  double G(double a, double) const { return kTwoOverSqrtPi * std::exp(-a * a); }
};

template <class Op, bool kAScalar, bool kBScalar>
struct BinaryKernel {
  static void Values(int count, const Operand& a, const Operand& b, double* __restrict out) {
    const In<kAScalar> x(a.value);
    const In<kBScalar> y(b.value);
    for (int i = 0; i < count; ++i) out[i] = Op::V(x[i], y[i]);
  }

  static void Derivatives(int count, const Operand& a, const Operand& b, const double* v,
                          const std::vector<DerivativeTerm>& terms, double* const* out) {
    const In<kAScalar> x(a.value);
    const In<kBScalar> y(b.value);
    for (size_t k = 0; k < terms.size(); ++k) {
      double* __restrict o = out[k];
      const DerivativeTerm& term = terms[k];
      if (term.is_shared) continue;  // the operand already wrote it in place
      if (term.from_a >= 0 && term.from_b >= 0) {
        const In<kAScalar> da(a.derivatives[term.from_a]);
        const In<kBScalar> db(b.derivatives[term.from_b]);
        for (int i = 0; i < count; ++i) {
          o[i] = Op::Pa(x[i], y[i], v[i]) * da[i] + Op::Pb(x[i], y[i], v[i]) * db[i];
        }
      } else if (term.from_a >= 0) {
        const In<kAScalar> da(a.derivatives[term.from_a]);
        for (int i = 0; i < count; ++i) o[i] = Op::Pa(x[i], y[i], v[i]) * da[i];
      } else {
        const In<kBScalar> db(b.derivatives[term.from_b]);
        for (int i = 0; i < count; ++i) o[i] = Op::Pb(x[i], y[i], v[i]) * db[i];
      }
    }
  }
};

// a/b with derivatives: the value is the true quotient; the derivatives use r = 1/b,
// computed once per point, so that each derivative costs products only:
// d(a/b) = (da - v db) r.
template <bool kAScalar, bool kBScalar>
struct DivideKernel {
  static void Values(int count, const Operand& a, const Operand& b, double* __restrict out) {
    BinaryKernel<DivideOp, kAScalar, kBScalar>::Values(count, a, b, out);
  }

  static void Derivatives(int count, const Operand& a, const Operand& b, const double* v,
                          const std::vector<DerivativeTerm>& terms, double* const* out,
                          double* __restrict reciprocal) {
    const In<kBScalar> y(b.value);
    for (int i = 0; i < count; ++i) reciprocal[i] = 1.0 / y[i];
    for (size_t k = 0; k < terms.size(); ++k) {
      double* __restrict o = out[k];
      const DerivativeTerm& term = terms[k];
      if (term.from_a >= 0 && term.from_b >= 0) {
        const In<kAScalar> da(a.derivatives[term.from_a]);
        const In<kBScalar> db(b.derivatives[term.from_b]);
        for (int i = 0; i < count; ++i) o[i] = (da[i] - v[i] * db[i]) * reciprocal[i];
      } else if (term.from_a >= 0) {
        const In<kAScalar> da(a.derivatives[term.from_a]);
        for (int i = 0; i < count; ++i) o[i] = da[i] * reciprocal[i];
      } else {
        const In<kBScalar> db(b.derivatives[term.from_b]);
        for (int i = 0; i < count; ++i) o[i] = -v[i] * db[i] * reciprocal[i];
      }
    }
  }
};

// a^b with a non-constant exponent. kExpLog evaluates exp(b log a), used when b depends
// on parameters (and defined for a > 0 only); otherwise std::pow.
template <bool kExpLog, bool kAScalar, bool kBScalar>
struct PowerKernel {
  static void Values(int count, const Operand& a, const Operand& b, double* __restrict out) {
    const In<kAScalar> x(a.value);
    const In<kBScalar> y(b.value);
    for (int i = 0; i < count; ++i) {
      out[i] = kExpLog ? std::exp(y[i] * std::log(x[i])) : std::pow(x[i], y[i]);
    }
  }

  // The partials are computed once per point into the scratch arrays, then combined.
  static void Derivatives(int count, const Operand& a, const Operand& b, const double* v,
                          const std::vector<DerivativeTerm>& terms, double* const* out,
                          double* __restrict slope_a, double* __restrict slope_b) {
    const In<kAScalar> x(a.value);
    const In<kBScalar> y(b.value);
    bool needs_a = false;
    bool needs_b = false;
    for (const DerivativeTerm& term : terms) {
      needs_a = needs_a || term.from_a >= 0;
      needs_b = needs_b || term.from_b >= 0;
    }
    if (needs_a) {
      for (int i = 0; i < count; ++i) slope_a[i] = PowerSlope(x[i], y[i], v[i]);
    }
    if (needs_b) {
      for (int i = 0; i < count; ++i) slope_b[i] = PowerExponentSlope(x[i], v[i]);
    }
    for (size_t k = 0; k < terms.size(); ++k) {
      double* __restrict o = out[k];
      const DerivativeTerm& term = terms[k];
      if (term.from_a >= 0 && term.from_b >= 0) {
        const In<kAScalar> da(a.derivatives[term.from_a]);
        const In<kBScalar> db(b.derivatives[term.from_b]);
        for (int i = 0; i < count; ++i) o[i] = slope_a[i] * da[i] + slope_b[i] * db[i];
      } else if (term.from_a >= 0) {
        const In<kAScalar> da(a.derivatives[term.from_a]);
        for (int i = 0; i < count; ++i) o[i] = slope_a[i] * da[i];
      } else {
        const In<kBScalar> db(b.derivatives[term.from_b]);
        for (int i = 0; i < count; ++i) o[i] = slope_b[i] * db[i];
      }
    }
  }
};

template <class Op>
void UnaryValues(const Op& op, int count, const Operand& a, double* __restrict out) {
  const double* x = a.value;
  for (int i = 0; i < count; ++i) out[i] = op.V(x[i]);
}

// A one-operand result has the operand's dependencies, so term k reads derivative k.
// Functions whose slope is their own value (exp) need no scratch array for it.
template <class Op>
constexpr bool kSlopeIsValue = std::is_same_v<Op, ExpOp>;

template <class Op>
void UnaryDerivatives(const Op& op, int count, const Operand& a, const double* v, size_t num_terms,
                      double* const* out, double* __restrict scratch) {
  const double* x = a.value;
  if (num_terms == 1) {
    const double* da = a.derivatives[0];
    double* __restrict o = out[0];
    for (int i = 0; i < count; ++i) o[i] = op.G(x[i], v[i]) * da[i];
    return;
  }
  if (num_terms == 0) return;
  const double* g = v;
  if constexpr (!kSlopeIsValue<Op>) {
    for (int i = 0; i < count; ++i) scratch[i] = op.G(x[i], v[i]);
    g = scratch;
  }
  for (size_t k = 0; k < num_terms; ++k) {
    const double* da = a.derivatives[k];
    double* __restrict o = out[k];
    for (int i = 0; i < count; ++i) o[i] = g[i] * da[i];
  }
}

template <template <bool, bool> class Kernel>
void BinaryValues(int count, const Operand& a, const Operand& b, double* out) {
  if (!a.is_vector && !b.is_vector) return Kernel<true, true>::Values(count, a, b, out);
  if (!a.is_vector) return Kernel<true, false>::Values(count, a, b, out);
  if (!b.is_vector) return Kernel<false, true>::Values(count, a, b, out);
  Kernel<false, false>::Values(count, a, b, out);
}

template <template <bool, bool> class Kernel>
void BinaryWithDerivatives(int count, const Operand& a, const Operand& b, double* out,
                           const std::vector<DerivativeTerm>& terms, double* const* derivatives) {
  BinaryValues<Kernel>(count, a, b, out);
  if (terms.empty()) return;
  if (!a.is_vector && !b.is_vector) {
    Kernel<true, true>::Derivatives(count, a, b, out, terms, derivatives);
  } else if (!a.is_vector) {
    Kernel<true, false>::Derivatives(count, a, b, out, terms, derivatives);
  } else if (!b.is_vector) {
    Kernel<false, true>::Derivatives(count, a, b, out, terms, derivatives);
  } else {
    Kernel<false, false>::Derivatives(count, a, b, out, terms, derivatives);
  }
}

// As BinaryWithDerivatives, for kernels whose derivatives need one scratch array.
template <template <bool, bool> class Kernel>
void BinaryWithScratch(int count, const Operand& a, const Operand& b, double* out,
                       const std::vector<DerivativeTerm>& terms, double* const* derivatives,
                       double* scratch) {
  BinaryValues<Kernel>(count, a, b, out);
  if (terms.empty()) return;
  if (!a.is_vector && !b.is_vector) {
    Kernel<true, true>::Derivatives(count, a, b, out, terms, derivatives, scratch);
  } else if (!a.is_vector) {
    Kernel<true, false>::Derivatives(count, a, b, out, terms, derivatives, scratch);
  } else if (!b.is_vector) {
    Kernel<false, true>::Derivatives(count, a, b, out, terms, derivatives, scratch);
  } else {
    Kernel<false, false>::Derivatives(count, a, b, out, terms, derivatives, scratch);
  }
}

template <bool kExpLog>
void PowerWithDerivatives(int count, const Operand& a, const Operand& b, double* out,
                          const std::vector<DerivativeTerm>& terms, double* const* derivatives,
                          double* temp_a, double* temp_b) {
  if (!a.is_vector && !b.is_vector) {
    PowerKernel<kExpLog, true, true>::Values(count, a, b, out);
    PowerKernel<kExpLog, true, true>::Derivatives(count, a, b, out, terms, derivatives, temp_a,
                                                  temp_b);
  } else if (!a.is_vector) {
    PowerKernel<kExpLog, true, false>::Values(count, a, b, out);
    PowerKernel<kExpLog, true, false>::Derivatives(count, a, b, out, terms, derivatives, temp_a,
                                                   temp_b);
  } else if (!b.is_vector) {
    PowerKernel<kExpLog, false, true>::Values(count, a, b, out);
    PowerKernel<kExpLog, false, true>::Derivatives(count, a, b, out, terms, derivatives, temp_a,
                                                   temp_b);
  } else {
    PowerKernel<kExpLog, false, false>::Values(count, a, b, out);
    PowerKernel<kExpLog, false, false>::Derivatives(count, a, b, out, terms, derivatives, temp_a,
                                                    temp_b);
  }
}

template <bool kA, bool kB>
using AddKernel = BinaryKernel<AddOp, kA, kB>;
template <bool kA, bool kB>
using SubtractKernel = BinaryKernel<SubtractOp, kA, kB>;
template <bool kA, bool kB>
using MultiplyKernel = BinaryKernel<MultiplyOp, kA, kB>;
template <bool kA, bool kB>
using PowKernel = PowerKernel<false, kA, kB>;
template <bool kA, bool kB>
using PowExpLogKernel = PowerKernel<true, kA, kB>;

// Calls `visit` with the functor of a one-operand instruction; false for two operands.
template <class Visitor>
bool VisitUnary(const Instruction& instruction, Visitor&& visit) {
  switch (instruction.op) {
    case OpCode::kNegate:
      visit(NegateOp{});
      return true;
    case OpCode::kReciprocal:
      visit(ReciprocalOp{});
      return true;
    case OpCode::kSquare:
      visit(SquareOp{});
      return true;
    case OpCode::kPowInteger:
      visit(PowIntegerOp{instruction.integer_exponent});
      return true;
    case OpCode::kPowConstant:
      visit(PowConstantOp{instruction.exponent});
      return true;
    case OpCode::kExp:
      visit(ExpOp{});
      return true;
    case OpCode::kLog:
      visit(LogOp{});
      return true;
    case OpCode::kLog10:
      visit(Log10Op{});
      return true;
    case OpCode::kSqrt:
      visit(SqrtOp{});
      return true;
    case OpCode::kSin:
      visit(SinOp{});
      return true;
    case OpCode::kCos:
      visit(CosOp{});
      return true;
    case OpCode::kTan:
      visit(TanOp{});
      return true;
    case OpCode::kAtan:
      visit(AtanOp{});
      return true;
    case OpCode::kTanh:
      visit(TanhOp{});
      return true;
    case OpCode::kAbs:
      visit(AbsOp{});
      return true;
    case OpCode::kErf:
      visit(ErfOp{});
      return true;
    default:
      return false;
  }
}

}  // namespace

void RunValues(const Instruction& instruction, int count, const Operand& a, const Operand& b,
               double* out) {
  switch (instruction.op) {
    case OpCode::kAdd:
      return BinaryValues<AddKernel>(count, a, b, out);
    case OpCode::kSubtract:
      return BinaryValues<SubtractKernel>(count, a, b, out);
    case OpCode::kMultiply:
      return BinaryValues<MultiplyKernel>(count, a, b, out);
    case OpCode::kDivide:
      return BinaryValues<DivideKernel>(count, a, b, out);
    case OpCode::kPow:
      return BinaryValues<PowKernel>(count, a, b, out);
    case OpCode::kPowExpLog:
      return BinaryValues<PowExpLogKernel>(count, a, b, out);
    default:
      VisitUnary(instruction, [&](const auto& op) { UnaryValues(op, count, a, out); });
  }
}

void RunWithDerivatives(const Instruction& instruction, int count, const Operand& a,
                        const Operand& b, double* out, double* const* out_derivatives,
                        double* temp_a, double* temp_b) {
  const std::vector<DerivativeTerm>& terms = instruction.terms;
  switch (instruction.op) {
    case OpCode::kAdd:
      return BinaryWithDerivatives<AddKernel>(count, a, b, out, terms, out_derivatives);
    case OpCode::kSubtract:
      return BinaryWithDerivatives<SubtractKernel>(count, a, b, out, terms, out_derivatives);
    case OpCode::kMultiply:
      return BinaryWithDerivatives<MultiplyKernel>(count, a, b, out, terms, out_derivatives);
    case OpCode::kDivide:
      return BinaryWithScratch<DivideKernel>(count, a, b, out, terms, out_derivatives, temp_a);
    case OpCode::kPow:
      return PowerWithDerivatives<false>(count, a, b, out, terms, out_derivatives, temp_a, temp_b);
    case OpCode::kPowExpLog:
      return PowerWithDerivatives<true>(count, a, b, out, terms, out_derivatives, temp_a, temp_b);
    default:
      VisitUnary(instruction, [&](const auto& op) {
        UnaryValues(op, count, a, out);
        UnaryDerivatives(op, count, a, out, terms.size(), out_derivatives, temp_a);
      });
  }
}

double EvaluateScalar(const Instruction& instruction, double a, double b) {
  Operand first;
  first.value = &a;
  Operand second;
  second.value = &b;
  double out = 0.0;
  RunValues(instruction, 1, first, second, &out);
  return out;
}

}  // namespace internal
}  // namespace foothold
