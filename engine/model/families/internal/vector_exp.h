#pragma once
// exp over an array, vectorised: Cody-Waite reduction x = k ln2 + r with |r| <= ln2/2, a
// degree-13 Taylor polynomial for e^r (truncation below 5e-18, so within about 1 ulp of
// the exact value) and 2^k put together in the exponent bits. Arguments outside
// [-708, 708] (where 2^k leaves the normal range), infinities and NaN are redone by
// std::exp. On processors with AVX2 and FMA a 4-wide fused version runs (chosen once at
// run time); elsewhere the 2-wide SSE2 one. Within one machine the result is deterministic.

namespace foothold {
namespace internal {

// out[i] = exp(in[i]) for i < n. `in` and `out` must not overlap.
void VectorExp(const double* in, double* out, int n);

}  // namespace internal
}  // namespace foothold
