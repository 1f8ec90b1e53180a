#pragma once
// Re-seating one member of a permutation-symmetric model (one peak of a peak sum) where the
// best fit so far explains the data worst. Peaks that a local fit stacked on one feature,
// or left on the wrong side of a shoulder, cannot walk past each other: the cost rises in
// between. Moving one member straight onto the largest smoothed residual skips that ridge.

#include <Eigen/Core>

#include "engine/model/model.h"
#include "engine/multistart/internal/random_stream.h"
#include "engine/multistart/internal/start_schedule.h"
#include "engine/solve/problem.h"

namespace foothold {
namespace internal {

// The symmetry re-seating moves along: the first whose members carry a location on the
// single predictor axis (PermutationSymmetry::location_position >= 0), with every member's
// location free. False when there is none or the data have more than one predictor.
bool FindReseatSymmetry(const Problem& problem, PermutationSymmetry* symmetry);

// `center` with the location of one member, chosen uniformly, moved to x_i, where i is drawn
// with probability proportional to the squared smoothed (weighted) residual of the curve at
// `center`, and that member's other nonlinear parameters (its width) nudged by a normal
// step of 0.1 of the box's unit width; the result is clamped into the box. `model` evaluates the
// curve (one thread at a time). Returns `center` unchanged when the residuals are all zero or not
// finite.
Eigen::VectorXd ReseatStart(const Problem& problem, const Model& model, const ResolvedBox& box,
                            const PermutationSymmetry& symmetry, const Eigen::VectorXd& center,
                            RandomStream* stream);

}  // namespace internal
}  // namespace foothold
