#pragma once
// The Sobol low-discrepancy sequence (Sobol 1967), built as in Bratley & Fox (1988,
// "Algorithm 659: Implementing Sobol's quasirandom sequence generator", ACM TOMS 14(1))
// and Joe & Kuo (2003, "Remark on Algorithm 659", ACM TOMS 29(1)), in Gray-code order
// (Antonov & Saleev 1979).
//
// What is ours and what is theirs: the construction (one primitive polynomial over GF(2)
// per dimension, odd initial direction numbers m_k < 2^k, the Bratley–Fox recurrence, the
// Gray-code XOR) is the published one and gives a valid Sobol (t, s)-sequence for any
// choice of odd initial numbers. We do not reproduce the Joe–Kuo table: the primitive
// polynomials are enumerated here in increasing order of their coefficient bits and tested
// for primitivity, and the free initial numbers m_2 .. m_s come from a fixed RandomStream.
// Dimension 1 is the van der Corput sequence in base 2 (all m_k = 1), as in every Sobol
// construction; dimension d >= 2 uses the (d-1)-th primitive polynomial (x + 1 first).

#include <cstdint>
#include <vector>

namespace foothold {
namespace internal {

class SobolSequence {
 public:
  static constexpr int kMaxDimension = 64;
  // Direction numbers have 32 bits: 2^32 distinct points per dimension.
  static constexpr int kBits = 32;

  // 1 <= dimension <= kMaxDimension (asserted).
  explicit SobolSequence(int dimension);

  int Dimension() const { return dimension_; }
  // Point `index` of the Gray-code ordered sequence as 32-bit fractions (coordinate =
  // bits / 2^32); index 0 is the origin. Every block of 2^m consecutive indices starting at
  // a multiple of 2^m is the same point set as in Sobol's original order.
  void PointBits(std::uint64_t index, std::uint32_t* bits) const;
  // The same point as doubles in [0, 1).
  void Point(std::uint64_t index, double* point) const;

  // The primitive polynomial of dimension d >= 2 as coefficient bits
  // (x^s + a_1 x^(s-1) + ... + a_(s-1) x + 1 -> binary 1 a_1 ... a_(s-1) 1); 0 for d = 1.
  std::uint32_t Polynomial(int d) const { return polynomials_[d - 1]; }
  // Direction integer V_k of dimension d (1-based k): m_k * 2^(32 - k).
  std::uint32_t Direction(int d, int k) const { return directions_[(d - 1) * kBits + k - 1]; }

  // True when `polynomial` (coefficient bits as above, degree >= 1) is primitive over GF(2):
  // x has multiplicative order exactly 2^degree - 1 modulo it (which also implies that it
  // is irreducible). Exposed for the tests.
  static bool IsPrimitive(std::uint32_t polynomial);

 private:
  int dimension_;
  std::vector<std::uint32_t> polynomials_;
  std::vector<std::uint32_t> directions_;  // dimension_ x kBits, row major
};

}  // namespace internal
}  // namespace foothold
