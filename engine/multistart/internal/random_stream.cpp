#include "engine/multistart/internal/random_stream.h"

#include <cmath>

namespace foothold {
namespace internal {
namespace {

constexpr std::uint64_t kGoldenGamma = 0x9e3779b97f4a7c15ULL;  // 2^64 / golden ratio, odd
constexpr double kTwoPi = 6.283185307179586476925286766559;
constexpr double kTwoToMinus53 = 1.0 / 9007199254740992.0;

std::uint64_t RotateLeft(std::uint64_t x, int k) { return (x << k) | (x >> (64 - k)); }

}  // namespace

std::uint64_t SplitMix64Next(std::uint64_t* state) {
  std::uint64_t z = (*state += kGoldenGamma);
  z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
  z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
  return z ^ (z >> 31);
}

RandomStream::RandomStream(std::uint64_t seed, std::uint64_t stream_index) {
  // Mix the seed first, then fold the stream index in through a second SplitMix64 output,
  // so (seed, index) and (seed + 1, index - 1) do not collide.
  std::uint64_t mixer = seed;
  std::uint64_t key = SplitMix64Next(&mixer) ^ (stream_index * kGoldenGamma);
  mixer = key;
  for (std::uint64_t& word : state_) word = SplitMix64Next(&mixer);
  // xoshiro's state must not be all zero; SplitMix64 outputs are a bijection of distinct
  // counters, so four consecutive outputs are never all zero, but keep the guarantee local.
  if ((state_[0] | state_[1] | state_[2] | state_[3]) == 0) state_[0] = kGoldenGamma;
}

std::uint64_t RandomStream::NextBits() {
  const std::uint64_t result = RotateLeft(state_[1] * 5, 7) * 9;
  const std::uint64_t t = state_[1] << 17;
  state_[2] ^= state_[0];
  state_[3] ^= state_[1];
  state_[1] ^= state_[2];
  state_[0] ^= state_[3];
  state_[2] ^= t;
  state_[3] = RotateLeft(state_[3], 45);
  return result;
}

double RandomStream::NextUniform() { return static_cast<double>(NextBits() >> 11) * kTwoToMinus53; }

double RandomStream::NextOpenUniform() {
  // (k + 0.5) / 2^53 for k in [0, 2^53): symmetric about 1/2 and never 0 or 1.
  return (static_cast<double>(NextBits() >> 11) + 0.5) * kTwoToMinus53;
}

double RandomStream::NextNormal() {
  if (has_spare_normal_) {
    has_spare_normal_ = false;
    return spare_normal_;
  }
  // Box & Muller (1958): for independent uniforms u1 in (0, 1], u2 in [0, 1),
  // sqrt(-2 ln u1) (cos 2 pi u2, sin 2 pi u2) are two independent standard normals.
  const double radius = std::sqrt(-2.0 * std::log(NextOpenUniform()));
  const double angle = kTwoPi * NextUniform();
  spare_normal_ = radius * std::sin(angle);
  has_spare_normal_ = true;
  return radius * std::cos(angle);
}

}  // namespace internal
}  // namespace foothold
