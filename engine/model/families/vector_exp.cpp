#include "engine/model/families/internal/vector_exp.h"

#include <cmath>
#include <cstdint>
#include <cstring>

// Quiet compares (no trapping-math) let GCC turn the range test into a vector select.
#if defined(__GNUC__) && !defined(__clang__)
#pragma GCC optimize("no-trapping-math")
#endif

namespace foothold {
namespace internal {
namespace {

template <bool kFused>
__attribute__((always_inline)) inline double MulAdd(double a, double b, double c) {
  if (kFused) return __builtin_fma(a, b, c);
  return a * b + c;
}

template <bool kFused>
__attribute__((always_inline)) inline void ExpKernel(const double* in, double* out, int n) {
  constexpr double kLog2e = 1.4426950408889634074;
  constexpr double kLn2Hi = 6.93147180369123816490e-01;  // ln 2 split as in fdlibm
  constexpr double kLn2Lo = 1.90821492927058770002e-10;
  constexpr double kShifter = 6755399441055744.0;  // 1.5 * 2^52: rounds to an integer
  constexpr double kLimit = 708.0;
  std::int64_t shifter_bits;
  std::memcpy(&shifter_bits, &kShifter, sizeof shifter_bits);
  // Branch-free: |x| > 708, inf and NaN are computed as exp(0) here and redone below.
  for (int i = 0; i < n; ++i) {
    const double raw = in[i];
    const double x = std::fabs(raw) <= kLimit ? raw : 0.0;
    const double shifted = x * kLog2e + kShifter;
    const double k = shifted - kShifter;
    const double r = (x - k * kLn2Hi) - k * kLn2Lo;
    double p = 1.0 / 6227020800.0;  // 1/13!
    p = MulAdd<kFused>(p, r, 1.0 / 479001600.0);
    p = MulAdd<kFused>(p, r, 1.0 / 39916800.0);
    p = MulAdd<kFused>(p, r, 1.0 / 3628800.0);
    p = MulAdd<kFused>(p, r, 1.0 / 362880.0);
    p = MulAdd<kFused>(p, r, 1.0 / 40320.0);
    p = MulAdd<kFused>(p, r, 1.0 / 5040.0);
    p = MulAdd<kFused>(p, r, 1.0 / 720.0);
    p = MulAdd<kFused>(p, r, 1.0 / 120.0);
    p = MulAdd<kFused>(p, r, 1.0 / 24.0);
    p = MulAdd<kFused>(p, r, 1.0 / 6.0);
    p = MulAdd<kFused>(p, r, 0.5);
    p = MulAdd<kFused>(p, r, 1.0);
    p = MulAdd<kFused>(p, r, 1.0);
    std::int64_t bits;
    std::memcpy(&bits, &shifted, sizeof bits);
    const std::int64_t scale_bits = (bits - shifter_bits + 1023) << 52;
    double scale;
    std::memcpy(&scale, &scale_bits, sizeof scale);
    out[i] = p * scale;
  }
  // A predictable branch per point; taken only for arguments out of range.
  for (int i = 0; i < n; ++i) {
    if (!(std::fabs(in[i]) <= kLimit)) out[i] = std::exp(in[i]);
  }
}

__attribute__((target("avx2,fma"))) void ExpAvx2(const double* in, double* out, int n) {
  ExpKernel<true>(in, out, n);
}

void ExpBaseline(const double* in, double* out, int n) { ExpKernel<false>(in, out, n); }

bool HasAvx2Fma() {
  __builtin_cpu_init();
  return __builtin_cpu_supports("avx2") && __builtin_cpu_supports("fma");
}

}  // namespace

void VectorExp(const double* in, double* out, int n) {
  static const bool kUseAvx2 = HasAvx2Fma();
  if (kUseAvx2) {
    ExpAvx2(in, out, n);
  } else {
    ExpBaseline(in, out, n);
  }
}

}  // namespace internal
}  // namespace foothold
