#include "engine/multistart/internal/sobol_sequence.h"

#include <cassert>
#include <cstddef>

#include "engine/multistart/internal/random_stream.h"

namespace foothold {
namespace internal {
namespace {

// Seed of the stream that draws the free initial direction numbers. Fixed forever: changing
// it changes every quasi-random start foothold has ever produced.
constexpr std::uint64_t kDirectionSeed = 0x50B0150B0150B01ULL;
constexpr double kTwoToMinus32 = 1.0 / 4294967296.0;

int Degree(std::uint32_t polynomial) {
  int degree = -1;
  while (polynomial) {
    polynomial >>= 1;
    ++degree;
  }
  return degree;
}

// The first `count` primitive polynomials of degree >= 1, in increasing order of their
// coefficient bits (hence of degree). Degrees up to 9 suffice for 63 of them.
std::vector<std::uint32_t> PrimitivePolynomials(int count) {
  std::vector<std::uint32_t> found;
  for (std::uint32_t candidate = 3; static_cast<int>(found.size()) < count; candidate += 2) {
    if (SobolSequence::IsPrimitive(candidate)) found.push_back(candidate);
  }
  return found;
}

}  // namespace

bool SobolSequence::IsPrimitive(std::uint32_t polynomial) {
  const int degree = Degree(polynomial);
  if (degree < 1 || degree > 20 || (polynomial & 1u) == 0) return false;
  const std::uint32_t period = (1u << degree) - 1;
  const std::uint32_t top = 1u << degree;
  // Powers of x modulo the polynomial: r <- r * x mod p. The order of x is the first k > 0
  // with x^k = 1; it divides 2^degree - 1 exactly when p is irreducible, and equals it when
  // p is primitive.
  std::uint32_t power = 1;
  for (std::uint32_t k = 1; k <= period; ++k) {
    power <<= 1;
    if (power & top) power ^= polynomial;
    if (power == 1) return k == period;
  }
  return false;
}

SobolSequence::SobolSequence(int dimension) : dimension_(dimension) {
  assert(dimension >= 1 && dimension <= kMaxDimension);
  polynomials_.assign(dimension_, 0);
  directions_.assign(static_cast<std::size_t>(dimension_) * kBits, 0);
  const std::vector<std::uint32_t> primitive = PrimitivePolynomials(dimension_ - 1);

  for (int d = 1; d <= dimension_; ++d) {
    std::uint32_t m[kBits + 1] = {0};  // m[k], 1-based, odd, m[k] < 2^k
    if (d == 1) {
      for (int k = 1; k <= kBits; ++k) m[k] = 1;
    } else {
      const std::uint32_t polynomial = primitive[d - 2];
      polynomials_[d - 1] = polynomial;
      const int s = Degree(polynomial);
      // Free initial numbers: any odd m_k < 2^k is admissible (Bratley & Fox 1988, sec. 2).
      RandomStream stream(kDirectionSeed, static_cast<std::uint64_t>(d));
      m[1] = 1;
      for (int k = 2; k <= s && k <= kBits; ++k) {
        const std::uint32_t half = 1u << (k - 1);  // number of odd values below 2^k
        std::uint32_t pick = static_cast<std::uint32_t>(stream.NextUniform() * half);
        if (pick >= half) pick = half - 1;
        m[k] = 2 * pick + 1;
      }
      // Bratley & Fox (1988) eq. (3): m_k = 2 a_1 m_(k-1) ^ 4 a_2 m_(k-2) ^ ...
      //   ^ 2^(s-1) a_(s-1) m_(k-s+1) ^ 2^s m_(k-s) ^ m_(k-s).
      for (int k = s + 1; k <= kBits; ++k) {
        std::uint32_t value = m[k - s] ^ (m[k - s] << s);
        for (int i = 1; i < s; ++i) {
          const std::uint32_t a_i = (polynomial >> (s - i)) & 1u;
          if (a_i) value ^= m[k - i] << i;
        }
        m[k] = value;
      }
    }
    for (int k = 1; k <= kBits; ++k) {
      directions_[(d - 1) * kBits + k - 1] = m[k] << (kBits - k);
    }
  }
}

void SobolSequence::PointBits(std::uint64_t index, std::uint32_t* bits) const {
  // Antonov & Saleev (1979): point n is the XOR of the direction numbers selected by the
  // bits of the Gray code g(n) = n ^ (n >> 1); successive points differ in one direction.
  const std::uint64_t gray = index ^ (index >> 1);
  for (int d = 0; d < dimension_; ++d) {
    std::uint32_t value = 0;
    const std::uint32_t* v = &directions_[static_cast<std::size_t>(d) * kBits];
    for (int k = 0; k < kBits; ++k) {
      if ((gray >> k) & 1u) value ^= v[k];
    }
    bits[d] = value;
  }
}

void SobolSequence::Point(std::uint64_t index, double* point) const {
  std::uint32_t bits[kMaxDimension];
  PointBits(index, bits);
  for (int d = 0; d < dimension_; ++d) point[d] = bits[d] * kTwoToMinus32;
}

}  // namespace internal
}  // namespace foothold
