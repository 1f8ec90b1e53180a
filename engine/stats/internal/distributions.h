#pragma once
// Boost.Math distributions with a policy that returns NaN instead of throwing, so that the
// statistics never throw whatever reaches them.

#include <boost/math/distributions/normal.hpp>
#include <boost/math/distributions/students_t.hpp>
#include <boost/math/policies/policy.hpp>

namespace foothold {
namespace internal {

using NoThrowPolicy = boost::math::policies::policy<
    boost::math::policies::domain_error<boost::math::policies::ignore_error>,
    boost::math::policies::pole_error<boost::math::policies::ignore_error>,
    boost::math::policies::overflow_error<boost::math::policies::ignore_error>,
    boost::math::policies::evaluation_error<boost::math::policies::ignore_error>>;

using NormalDistribution = boost::math::normal_distribution<double, NoThrowPolicy>;
using StudentsTDistribution = boost::math::students_t_distribution<double, NoThrowPolicy>;

}  // namespace internal
}  // namespace foothold
