#pragma once
// Per-start random streams that give the same numbers on every platform and thread count.
//
// The standard library's distributions (std::normal_distribution, ...) are not specified
// bit for bit and differ between library implementations, so the multistart driver uses
// its own generator and transforms:
//   - SplitMix64 (Steele, Lea & Flood 2014, "Fast splittable pseudorandom number
//     generators", OOPSLA) to derive a stream's state from (seed, stream index);
//   - xoshiro256** (Blackman & Vigna 2021, "Scrambled linear pseudorandom number
//     generators", ACM TOMS 47(4)) as the stream itself;
//   - 53-bit uniforms in [0, 1) and the Box–Muller transform (Box & Muller 1958) for normals.
// Constants of both generators are those of the authors' public reference code, written
// here from memory; the tests check the generator's statistical behaviour, not a table.

#include <cstdint>

namespace foothold {
namespace internal {

// One step of SplitMix64: advances `state` and returns a well-mixed 64-bit value.
std::uint64_t SplitMix64Next(std::uint64_t* state);

class RandomStream {
 public:
  // The stream for (seed, stream_index). Distinct indices give statistically independent
  // streams: the 256-bit state is filled by SplitMix64 from a mix of both numbers.
  RandomStream(std::uint64_t seed, std::uint64_t stream_index);

  std::uint64_t NextBits();
  // Uniform on [0, 1) with 53 random bits (the top bits of NextBits()).
  double NextUniform();
  // Uniform on (0, 1): never exactly 0, for logarithms.
  double NextOpenUniform();
  // Standard normal by Box–Muller; the second value of each pair is kept for the next call.
  double NextNormal();

 private:
  std::uint64_t state_[4];
  bool has_spare_normal_ = false;
  double spare_normal_ = 0;
};

}  // namespace internal
}  // namespace foothold
