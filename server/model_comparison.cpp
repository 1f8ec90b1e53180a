#include "server/model_comparison.h"

#include <algorithm>
#include <boost/math/distributions/fisher_f.hpp>
#include <cmath>
#include <limits>

#include "server/fit_service.h"

namespace foothold {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

// The name shown for a candidate: polynomial carries its degree.
std::string LabelOf(const ModelSpec& spec) {
  if (spec.family == "polynomial")
    return "polynomial(" + std::to_string(spec.degree.value_or(2)) + ")";
  return spec.family;
}

int DegreeOf(const ModelSpec& spec) { return spec.degree.value_or(2); }

void AddAkaikeWeights(std::vector<RankedModel>* ranking) {
  double best = std::numeric_limits<double>::infinity();
  for (const RankedModel& row : *ranking) {
    if (std::isfinite(row.aicc)) best = std::min(best, row.aicc);
  }
  double total = 0;
  for (RankedModel& row : *ranking) {
    row.delta_aicc = std::isfinite(row.aicc) ? row.aicc - best : kNaN;
    row.akaike_weight = std::isfinite(row.delta_aicc) ? std::exp(-row.delta_aicc / 2) : 0;
    total += row.akaike_weight;
  }
  if (total > 0) {
    for (RankedModel& row : *ranking) row.akaike_weight /= total;
  }
}

NestedTest FTest(const CandidateFit& simpler, const CandidateFit& fuller,
                 const std::string& nesting, bool on_boundary, double level) {
  const FitStatistics& s = simpler.outcome.statistics;
  const FitStatistics& f = fuller.outcome.statistics;
  NestedTest test;
  test.simpler = LabelOf(simpler.outcome.model);
  test.fuller = LabelOf(fuller.outcome.model);
  test.nesting = nesting;
  test.on_boundary = on_boundary;
  test.df_extra = s.dof - f.dof;
  test.df_residual = f.dof;
  if (test.df_extra <= 0 || test.df_residual <= 0 || !(f.rss > 0) || !std::isfinite(s.rss)) {
    test.f = kNaN;
    test.p_value = kNaN;
    return test;
  }
  test.f = std::max(0.0, ((s.rss - f.rss) / test.df_extra) / (f.rss / test.df_residual));
  const boost::math::fisher_f distribution(test.df_extra, test.df_residual);
  test.p_value = boost::math::cdf(boost::math::complement(distribution, test.f));
  test.prefers_fuller = test.p_value < level;
  return test;
}

}  // namespace

bool ComparisonOptions::Validate(std::string* error) const {
  if (!(f_test_level > 0 && f_test_level < 1)) {
    *error = "f_test_level = " + std::to_string(f_test_level) + ": must be in (0, 1)";
    return false;
  }
  return true;
}

bool FamilyNestedIn(const ModelSpec& simpler, const ModelSpec& fuller, std::string* nesting,
                    bool* on_boundary) {
  *on_boundary = false;
  const std::string& a = simpler.family;
  const std::string& b = fuller.family;
  if (a == "line" && b == "polynomial" && DegreeOf(fuller) >= 1) {
    *nesting = DegreeOf(fuller) == 1 ? "identical" : "c2 = ... = 0";
    return true;
  }
  if (a == "polynomial" && b == "polynomial" && DegreeOf(simpler) < DegreeOf(fuller)) {
    *nesting = "c" + std::to_string(DegreeOf(simpler) + 1) + " = ... = 0";
    return true;
  }
  if (a == "exp_decay" && b == "biexp_decay") {
    *nesting = "amplitude2 = 0";
    return true;
  }
  if (a == "exp_decay" && b == "stretched_exp") {
    *nesting = "beta = 1";
    return true;
  }
  if (a == "logistic4" && b == "logistic5") {
    *nesting = "asymmetry = 1";
    return true;
  }
  if ((a == "gaussian" || a == "lorentzian") && b == "pseudo_voigt") {
    *nesting = a == "gaussian" ? "eta = 0" : "eta = 1";
    *on_boundary = true;  // eta is bounded to [0, 1]
    return true;
  }
  return false;
}

ModelComparison CompareFits(const std::vector<CandidateFit>& fits,
                            const ComparisonOptions& options) {
  ModelComparison comparison;
  for (size_t k = 0; k < fits.size(); ++k) {
    const FitOutcome& outcome = fits[k].outcome;
    RankedModel row;
    row.family = LabelOf(outcome.model);
    row.num_points = outcome.statistics.num_points;
    row.num_free = outcome.statistics.num_free;
    row.rss = outcome.statistics.rss;
    row.aicc = outcome.statistics.aicc;
    row.is_converged = outcome.IsConverged();
    row.index = static_cast<int>(k);
    comparison.ranking.push_back(row);
  }
  AddAkaikeWeights(&comparison.ranking);
  std::stable_sort(comparison.ranking.begin(), comparison.ranking.end(),
                   [](const RankedModel& x, const RankedModel& y) {
                     const bool fx = std::isfinite(x.aicc);
                     const bool fy = std::isfinite(y.aicc);
                     if (fx != fy) return fx;
                     return fx && x.aicc < y.aicc;
                   });
  for (size_t k = 0; k < comparison.ranking.size(); ++k) {
    comparison.ranking[k].rank = static_cast<int>(k) + 1;
  }
  comparison.winner_margin = kNaN;
  if (!comparison.ranking.empty() && std::isfinite(comparison.ranking[0].aicc)) {
    comparison.winner = comparison.ranking[0].family;
    if (comparison.ranking.size() > 1 && std::isfinite(comparison.ranking[1].aicc)) {
      comparison.winner_margin = comparison.ranking[1].aicc - comparison.ranking[0].aicc;
    }
  }
  for (const CandidateFit& simpler : fits) {
    for (const CandidateFit& fuller : fits) {
      std::string nesting;
      bool on_boundary = false;
      if (&simpler == &fuller ||
          !FamilyNestedIn(simpler.outcome.model, fuller.outcome.model, &nesting, &on_boundary)) {
        continue;
      }
      comparison.nested.push_back(
          FTest(simpler, fuller, nesting, on_boundary, options.f_test_level));
    }
  }
  return comparison;
}

bool FitFamilies(const FitRequest& base, const std::vector<ModelSpec>& families,
                 std::vector<CandidateFit>* out, std::string* error) {
  out->clear();
  for (const ModelSpec& family : families) {
    FitRequest request = base;
    request.model = family;
    CandidateFit candidate;
    candidate.family = LabelOf(family);
    if (!RunFit(request, &candidate.outcome, error)) {
      *error = candidate.family + ": " + *error;
      return false;
    }
    out->push_back(std::move(candidate));
  }
  return true;
}

}  // namespace foothold
