#pragma once
// Exact symmetries of the NIST StRD model texts, shared by the no-start certification
// tests: signed parameter permutations that leave each model unchanged.

#include <Eigen/Core>
#include <algorithm>
#include <string>
#include <vector>

#include "tests/certification/certification_support.h"

namespace foothold {
namespace certification {

// Exact symmetries of NIST's model texts: parameter maps that leave the
// function unchanged. From no start the multistart may end on any image of the
// certified optimum, so a run is scored at the image closest to the certified
// values; the test checks each map is exact. A map is a signed permutation:
// image[i] = sign[i] * params[source[i]].
struct SignedPermutation {
  std::vector<int> source;
  std::vector<double> sign;
};

inline SignedPermutation Swap(std::vector<int> source) {
  return {source, std::vector<double>(source.size(), 1.0)};
}
inline SignedPermutation Negate(int num_params, std::vector<int> negated) {
  SignedPermutation map;
  for (int i = 0; i < num_params; ++i) map.source.push_back(i);
  map.sign.assign(num_params, 1.0);
  for (int i : negated) map.sign[i] = -1.0;
  return map;
}

// Generators per problem (0-based indices; b1 is 0).
inline std::vector<SignedPermutation> SymmetryGenerators(const std::string &problem) {
  // Lanczos1-3: b1*exp(-b2*x) + b3*exp(-b4*x) + b5*exp(-b6*x), the three terms
  // commute.
  if (problem.rfind("Lanczos", 0) == 0) {
    return {Swap({2, 3, 0, 1, 4, 5}), Swap({0, 1, 4, 5, 2, 3})};
  }
  // Gauss1-3: the two peaks (b3,b4,b5) and (b6,b7,b8) commute; b5 and b8 enter
  // squared.
  if (problem.rfind("Gauss", 0) == 0) {
    return {Swap({0, 1, 5, 6, 7, 2, 3, 4}), Negate(8, {4}), Negate(8, {7})};
  }
  // MGH17: b1 + b2*exp(-x*b4) + b3*exp(-x*b5), the two terms commute.
  if (problem == "MGH17") return {Swap({0, 2, 1, 4, 3})};
  // Eckerle4: (b1/b2)*exp(-0.5*((x-b3)/b2)^2) is unchanged by (b1, b2) -> (-b1,
  // -b2).
  if (problem == "Eckerle4") return {Negate(3, {0, 1})};
  // ENSO: the cycles (b4,b5,b6) and (b7,b8,b9) commute; (b4, b6) -> (-b4, -b6)
  // leaves b5*cos(2 pi x/b4) + b6*sin(2 pi x/b4) unchanged, likewise (b7, b9).
  if (problem == "ENSO") {
    return {Swap({0, 1, 2, 6, 7, 8, 3, 4, 5}), Negate(9, {3, 5}), Negate(9, {6, 8})};
  }
  return {};
}

inline SignedPermutation Compose(const SignedPermutation &outer, const SignedPermutation &inner) {
  // (outer o inner)(p)[i] = outer.sign[i] * inner(p)[outer.source[i]].
  SignedPermutation map;
  for (size_t i = 0; i < outer.source.size(); ++i) {
    map.source.push_back(inner.source[outer.source[i]]);
    map.sign.push_back(outer.sign[i] * inner.sign[outer.source[i]]);
  }
  return map;
}

// The group the generators span, identity included (closure under composition).
inline std::vector<SignedPermutation> SymmetryGroup(const std::string &problem, int num_params) {
  std::vector<SignedPermutation> group = {Negate(num_params, {})};
  const std::vector<SignedPermutation> generators = SymmetryGenerators(problem);
  for (size_t k = 0; k < group.size(); ++k) {
    for (const SignedPermutation &g : generators) {
      const SignedPermutation next = Compose(g, group[k]);
      const bool is_known = std::any_of(group.begin(), group.end(), [&](const auto &m) {
        return m.source == next.source && m.sign == next.sign;
      });
      if (!is_known) group.push_back(next);
    }
  }
  return group;
}

inline Eigen::VectorXd Apply(const SignedPermutation &map, const Eigen::VectorXd &params,
                             bool is_magnitude) {
  Eigen::VectorXd image(params.size());
  for (Eigen::Index i = 0; i < params.size(); ++i) {
    image[i] = (is_magnitude ? 1.0 : map.sign[i]) * params[map.source[i]];
  }
  return image;
}

// The smallest LRE over the parameters at the member of the symmetry orbit of `params`
// closest to the certified values.
inline double MinLreModuloSymmetry(const std::string &problem, const Eigen::VectorXd &params,
                                   const std::vector<double> &certified) {
  double best = 0;
  for (const SignedPermutation &map : SymmetryGroup(problem, static_cast<int>(params.size()))) {
    const Eigen::VectorXd image = Apply(map, params, false);
    double lre = kMaxLre;
    for (size_t j = 0; j < certified.size(); ++j) {
      lre = std::min(lre, Lre(image[static_cast<Eigen::Index>(j)], certified[j]));
    }
    best = std::max(best, lre);
  }
  return best;
}

}  // namespace certification
}  // namespace foothold
