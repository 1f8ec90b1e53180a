#pragma once
// Where the generated starts come from: the resolved search box, Sobol points in its
// transformed coordinates, and jitter around known basins.

#include <Eigen/Core>
#include <cstdint>
#include <string>
#include <vector>

#include "engine/multistart/internal/random_stream.h"
#include "engine/multistart/internal/sobol_sequence.h"
#include "engine/multistart/multistart_options.h"
#include "engine/solve/problem.h"

namespace foothold {
namespace internal {

// The box actually sampled, finite on every free parameter.
struct ResolvedBox {
  std::vector<int> free;     // indices of the free parameters (the Sobol coordinates)
  Eigen::VectorXd lower;     // size p, finite for free parameters
  Eigen::VectorXd upper;     // size p
  std::vector<bool> is_log;  // size p: sampled uniformly in log(value)
  Eigen::VectorXd base;      // size p: values of fixed parameters (first candidate)

  // The transformed coordinate of value v of parameter j, and back.
  double ToUnit(int j, double value) const;
  double FromUnit(int j, double unit) const;
  // Width in the value (upper - lower), used as the parameter scale for tolerances.
  double Width(int j) const { return upper[j] - lower[j]; }
};

// Derives the box from the caller's box, the problem's bounds and the candidates (rules in
// multistart_options.h, SearchBox). Inputs are validated beforehand.
ResolvedBox ResolveBox(const Problem& problem, const std::vector<StartCandidate>& candidates,
                       const SearchBox& box);

// `params` with every free parameter clamped into the problem's bounds and every fixed one
// set to the box's base value.
Eigen::VectorXd ClampStart(const Problem& problem, const ResolvedBox& box,
                           const Eigen::VectorXd& params);

// The Sobol start number `ordinal` (0, 1, ...): Sobol point ordinal + 1 (the origin is
// skipped), digitally shifted by `shift` (XOR of each coordinate's 32 bits with a random
// word: a shifted (t, s)-sequence keeps its net property), mapped into the box.
Eigen::VectorXd SobolStart(const ResolvedBox& box, const SobolSequence& sobol,
                           const std::vector<std::uint32_t>& shift, std::uint64_t ordinal);

// A normal perturbation of `center` in the box's transformed coordinates: coordinate j moves
// by z * max(kJitterErrorMultiple * error_j (in transformed units), kJitterBoxShare * 1)
// where the unit box has width 1, then is clamped back into the box.
Eigen::VectorXd JitterStart(const ResolvedBox& box, const Eigen::VectorXd& center,
                            const Eigen::VectorXd& standard_errors, RandomStream* stream);

}  // namespace internal
}  // namespace foothold
