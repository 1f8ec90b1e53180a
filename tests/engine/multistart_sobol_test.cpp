// Sobol sequence and random streams of the multistart driver.
#include <catch2/catch.hpp>
#include <cmath>
#include <cstdint>
#include <set>
#include <vector>

#include "engine/multistart/internal/random_stream.h"
#include "engine/multistart/internal/sobol_sequence.h"

namespace foothold {
namespace {

using internal::RandomStream;
using internal::SobolSequence;

// Euler's totient, for the number of primitive polynomials of degree d: phi(2^d - 1) / d
// (Lidl & Niederreiter, "Finite Fields", Theorem 3.5: a standard count, from memory).
int Totient(int m) {
  int result = m;
  for (int q = 2; q * q <= m; ++q) {
    if (m % q == 0) {
      while (m % q == 0) m /= q;
      result -= result / q;
    }
  }
  if (m > 1) result -= result / m;
  return result;
}

TEST_CASE("SobolSequence: dimension 1 is the base-2 van der Corput sequence in Gray order",
          "[engine]") {
  const SobolSequence sobol(1);
  const double expected[] = {0.0, 0.5, 0.75, 0.25, 0.375, 0.875, 0.625, 0.125};
  for (int n = 0; n < 8; ++n) {
    double x;
    sobol.Point(n, &x);
    CHECK(x == expected[n]);
  }
}

TEST_CASE("SobolSequence: polynomials are the primitive ones in increasing order", "[engine]") {
  const SobolSequence sobol(SobolSequence::kMaxDimension);
  CHECK(sobol.Polynomial(2) == 0b11u);                // x + 1
  CHECK(sobol.Polynomial(3) == 0b111u);               // x^2 + x + 1
  CHECK(sobol.Polynomial(4) == 0b1011u);              // x^3 + x + 1
  CHECK(sobol.Polynomial(5) == 0b1101u);              // x^3 + x^2 + 1
  CHECK_FALSE(SobolSequence::IsPrimitive(0b101u));    // x^2 + 1 = (x + 1)^2
  CHECK_FALSE(SobolSequence::IsPrimitive(0b11111u));  // x^4+x^3+x^2+x+1: irreducible, order 5
  std::vector<int> per_degree(10, 0);
  for (int d = 2; d <= SobolSequence::kMaxDimension; ++d) {
    const std::uint32_t polynomial = sobol.Polynomial(d);
    REQUIRE(SobolSequence::IsPrimitive(polynomial));
    if (d > 2) CHECK(polynomial > sobol.Polynomial(d - 1));
    int degree = 0;
    while ((polynomial >> (degree + 1)) != 0) ++degree;
    ++per_degree[degree];
  }
  // Every primitive polynomial of degree 1..8 is used before any of degree 9.
  for (int degree = 1; degree <= 8; ++degree) {
    CHECK(per_degree[degree] == Totient((1 << degree) - 1) / degree);
  }
}

TEST_CASE("SobolSequence: direction numbers are odd m_k < 2^k", "[engine]") {
  const SobolSequence sobol(SobolSequence::kMaxDimension);
  for (int d = 1; d <= SobolSequence::kMaxDimension; ++d) {
    for (int k = 1; k <= SobolSequence::kBits; ++k) {
      const std::uint32_t m = sobol.Direction(d, k) >> (SobolSequence::kBits - k);
      CHECK(m % 2 == 1);
      CHECK(std::uint64_t{m} < (std::uint64_t{1} << k));
    }
  }
}

TEST_CASE("SobolSequence: every coordinate of the first 2^m points stratifies [0, 1)", "[engine]") {
  // One-dimensional projections of a Sobol sequence are (0, 1)-sequences: the first 2^m
  // points put exactly one point in each interval [i / 2^m, (i + 1) / 2^m).
  constexpr int kLogPoints = 10;
  constexpr int kPoints = 1 << kLogPoints;
  const SobolSequence sobol(SobolSequence::kMaxDimension);
  std::vector<std::vector<int>> counts(SobolSequence::kMaxDimension, std::vector<int>(kPoints));
  std::uint32_t bits[SobolSequence::kMaxDimension];
  for (int n = 0; n < kPoints; ++n) {
    sobol.PointBits(n, bits);
    for (int d = 0; d < SobolSequence::kMaxDimension; ++d)
      ++counts[d][bits[d] >> (32 - kLogPoints)];
  }
  for (int d = 0; d < SobolSequence::kMaxDimension; ++d) {
    for (int cell = 0; cell < kPoints; ++cell) REQUIRE(counts[d][cell] == 1);
  }
}

TEST_CASE("SobolSequence: the first two dimensions form a (0, m, 2)-net", "[engine]") {
  // Dimensions 1 and 2 (van der Corput and x + 1) have t = 0: every elementary box of area
  // 2^-m holds exactly one of the first 2^m points.
  constexpr int kLogPoints = 8;
  const SobolSequence sobol(2);
  std::uint32_t bits[2];
  for (int a = 0; a <= kLogPoints; ++a) {
    std::set<std::pair<std::uint32_t, std::uint32_t>> boxes;
    for (int n = 0; n < (1 << kLogPoints); ++n) {
      sobol.PointBits(n, bits);
      const std::uint32_t bx = a == 0 ? 0 : bits[0] >> (32 - a);
      const std::uint32_t by = a == kLogPoints ? 0 : bits[1] >> (32 - (kLogPoints - a));
      boxes.insert({bx, by});
    }
    CHECK(boxes.size() == (1u << kLogPoints));
  }
}

TEST_CASE("SobolSequence: integrates a smooth product better than pseudo-random points",
          "[engine]") {
  // f(x) = prod_d (x_d + 1/2) on [0, 1]^4 has integral 1 exactly.
  constexpr int kDimension = 4;
  constexpr int kPoints = 4096;
  constexpr int kRandomRepeats = 16;
  // Quasi-Monte Carlo error O((log N)^s / N) against O(N^-1/2): an order of magnitude at
  // N = 4096 is a conservative margin.
  constexpr double kRequiredAdvantage = 10.0;
  auto f = [](const double* x) {
    double value = 1;
    for (int d = 0; d < kDimension; ++d) value *= x[d] + 0.5;
    return value;
  };
  const SobolSequence sobol(kDimension);
  double sum = 0;
  double x[kDimension];
  for (int n = 0; n < kPoints; ++n) {
    sobol.Point(n, x);
    sum += f(x);
  }
  const double sobol_error = std::abs(sum / kPoints - 1);
  double random_square_error = 0;
  for (int repeat = 0; repeat < kRandomRepeats; ++repeat) {
    RandomStream stream(12345, repeat);
    double random_sum = 0;
    for (int n = 0; n < kPoints; ++n) {
      for (double& coordinate : x) coordinate = stream.NextUniform();
      random_sum += f(x);
    }
    random_square_error += std::pow(random_sum / kPoints - 1, 2) / kRandomRepeats;
  }
  CHECK(sobol_error * kRequiredAdvantage < std::sqrt(random_square_error));
}

TEST_CASE("RandomStream: same (seed, index) repeats, different indices differ", "[engine]") {
  RandomStream a(7, 3), b(7, 3), c(7, 4), d(8, 3);
  for (int i = 0; i < 100; ++i) {
    const std::uint64_t va = a.NextBits();
    CHECK(va == b.NextBits());
    CHECK(va != c.NextBits());
    CHECK(va != d.NextBits());
  }
}

TEST_CASE("RandomStream: uniform and normal moments", "[engine]") {
  constexpr int kSamples = 200000;
  // Five standard errors of each sample moment.
  const double kMeanTolerance = 5.0 / std::sqrt(kSamples);
  RandomStream stream(7, 0);
  double u_sum = 0, u_square = 0, z_sum = 0, z_square = 0, z_fourth = 0;
  for (int i = 0; i < kSamples; ++i) {
    const double u = stream.NextUniform();
    REQUIRE(u >= 0);
    REQUIRE(u < 1);
    u_sum += u;
    u_square += u * u;
    const double z = stream.NextNormal();
    z_sum += z;
    z_square += z * z;
    z_fourth += z * z * z * z;
  }
  CHECK(std::abs(u_sum / kSamples - 0.5) < kMeanTolerance * std::sqrt(1.0 / 12));
  CHECK(std::abs(u_square / kSamples - 1.0 / 3) < kMeanTolerance * 0.3);
  CHECK(std::abs(z_sum / kSamples) < kMeanTolerance);
  CHECK(std::abs(z_square / kSamples - 1) < kMeanTolerance * std::sqrt(2.0));
  CHECK(std::abs(z_fourth / kSamples - 3) < kMeanTolerance * std::sqrt(96.0));
}

}  // namespace
}  // namespace foothold
