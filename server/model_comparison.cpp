#include "server/model_comparison.h"

#include <algorithm>
#include <boost/math/distributions/fisher_f.hpp>
#include <cmath>
#include <limits>
#include <utility>

#include "server/fit_service.h"

namespace foothold {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

std::string LabelOf(const ModelSpec& spec) { return ComparedLabel(spec); }

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

bool SameFamily(const ModelSpec& a, const ModelSpec& b) {
  return a.family == b.family && a.degree == b.degree && a.peaks == b.peaks &&
         a.auto_peaks == b.auto_peaks;
}

// A message about one family's request, said of its entry: "model.family: ..." becomes
// "compare[1].family: ...", one about the data the family reads ("data: 4 points but the
// model has 5 free parameters") is prefixed with the entry and its family. Anything else
// names a field of the request itself, the same for every family, and stays as it is.
std::string SaidOfEntry(const std::string& field, const ModelSpec& family,
                        const std::string& message) {
  if (message.rfind("model.", 0) == 0 || message.rfind("model:", 0) == 0) {
    return field + message.substr(5);
  }
  for (const char* prefix : {"data:", "problem:", "start.", "the guessed start"}) {
    if (message.rfind(prefix, 0) == 0) {
      return field + " (" + ComparedLabel(family) + "): " + message;
    }
  }
  return message;
}

// The request one family of a comparison is fitted with.
FitRequest RequestFor(const FitRequest& base, const ModelSpec& family) {
  FitRequest request = base;
  request.model = family;
  request.compare.clear();
  return request;
}

// Starts a family is expected to run before it has run: the multistart budget, or all of its
// seeded candidates when there are more.
int PlannedStarts(const FitRequest& request, const PreparedFit& prepared) {
  if (request.starts == 1) return 1;
  MultistartOptions options;
  options.max_starts = request.starts;
  const int budget = options.ResolvedMaxStarts(prepared.problem.NumFree());
  return std::max(budget, static_cast<int>(prepared.candidates.size()));
}

}  // namespace

std::string ComparedLabel(const ModelSpec& spec) {
  if (spec.family == "polynomial")
    return "polynomial(" + std::to_string(spec.degree.value_or(2)) + ")";
  if (spec.peaks && (spec.family == "multi_gaussian" || spec.family == "multi_lorentzian"))
    return spec.family + "(" + std::to_string(*spec.peaks) + ")";
  if (spec.auto_peaks) return spec.family + "(auto)";
  return spec.family;
}

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

bool ComparedFamilies(const FitRequest& request, std::vector<ModelSpec>* families,
                      std::vector<std::string>* fields, std::string* error) {
  families->clear();
  fields->clear();
  if (!request.model.expression.empty()) {
    *error =
        "model: an expression cannot join compare, which fits catalogue families; give "
        "model a family or leave it out";
    return false;
  }
  const std::pair<const char*, bool> given[] = {{"start", !request.start.empty()},
                                                {"fix", !request.fix.empty()},
                                                {"bounds", !request.bounds.empty()}};
  for (const auto& [field, is_given] : given) {
    if (is_given) {
      *error = std::string(field) +
               ": not accepted with compare: each compared family starts from its own guesses "
               "and default bounds (as foothold compare)";
      return false;
    }
  }
  if (request.model.IsFamily()) {
    families->push_back(request.model);
    fields->push_back("model");
  }
  for (size_t k = 0; k < request.compare.size(); ++k) {
    const std::string field = "compare[" + std::to_string(k) + "]";
    const ModelSpec& spec = request.compare[k];
    bool is_new = true;
    for (size_t j = 0; j < families->size() && is_new; ++j) {
      if (!SameFamily((*families)[j], spec)) continue;
      if ((*fields)[j] != "model") {
        *error =
            field + ": '" + ComparedLabel(spec) + "' is given twice (also " + (*fields)[j] + ")";
        return false;
      }
      is_new = false;  // model's family named again in compare: fitted once
    }
    if (!is_new) continue;
    families->push_back(spec);
    fields->push_back(field);
  }
  if (families->size() < 2) {
    *error = "compare: needs at least two different families (model's counts); got only '" +
             (families->empty() ? std::string() : ComparedLabel(families->front())) + "'";
    return false;
  }
  return true;
}

bool ValidateComparisonForAdmission(const FitRequest& request, int* max_parameters,
                                    std::string* error) {
  std::vector<ModelSpec> families;
  std::vector<std::string> fields;
  if (!ComparedFamilies(request, &families, &fields, error)) return false;
  *max_parameters = 0;
  for (size_t k = 0; k < families.size(); ++k) {
    int num_parameters = 0;
    std::string family_error;
    if (!ValidateFitRequestForAdmission(RequestFor(request, families[k]), &num_parameters,
                                        &family_error)) {
      *error = SaidOfEntry(fields[k], families[k], family_error);
      return false;
    }
    *max_parameters = std::max(*max_parameters, num_parameters);
  }
  return true;
}

bool RunComparison(const FitRequest& request, const FitHooks& hooks,
                   std::vector<CandidateFit>* fits, ModelComparison* comparison,
                   std::string* error) {
  std::vector<ModelSpec> families;
  std::vector<std::string> fields;
  if (!ComparedFamilies(request, &families, &fields, error)) return false;
  std::vector<FitRequest> requests;
  std::vector<PreparedFit> prepared(families.size());
  for (size_t k = 0; k < families.size(); ++k) {
    requests.push_back(RequestFor(request, families[k]));
    std::string family_error;
    if (!PrepareFit(requests[k], &prepared[k], &family_error)) {
      *error = SaidOfEntry(fields[k], families[k], family_error);
      return false;
    }
  }
  // Progress over the whole comparison; the fits run one after another, and the multistart
  // driver calls on_progress one call at a time, so no lock is needed.
  std::vector<int> planned(families.size());
  std::vector<int> finished(families.size(), 0);
  for (size_t k = 0; k < families.size(); ++k) planned[k] = PlannedStarts(requests[k], prepared[k]);
  double best_rss = std::numeric_limits<double>::quiet_NaN();
  auto report = [&] {
    if (!hooks.on_progress) return;
    int total_finished = 0;
    int total_planned = 0;
    for (size_t k = 0; k < families.size(); ++k) {
      total_finished += finished[k];
      total_planned += planned[k];
    }
    hooks.on_progress(total_finished, total_planned, best_rss);
  };
  fits->clear();
  for (size_t k = 0; k < families.size(); ++k) {
    FitHooks family_hooks;
    family_hooks.should_stop = hooks.should_stop;
    family_hooks.on_progress = [&, k](int num_finished, int num_planned, double rss) {
      finished[k] = num_finished;
      planned[k] = num_planned;
      if (std::isfinite(rss) && !(rss >= best_rss)) best_rss = rss;
      report();
    };
    CandidateFit candidate;
    candidate.family = ComparedLabel(families[k]);
    // A cancelled job reaches here with should_stop true: the fit returns before its first
    // start, marked cancelled, so the remaining families cost nothing.
    candidate.outcome = RunPreparedFit(requests[k], prepared[k], family_hooks);
    // A finished family planned what it ran (the stopping rule may end it early); a stopped
    // one keeps its budget, so a cancelled job shows how far it got.
    finished[k] = static_cast<int>(candidate.outcome.starts.size());
    if (!(hooks.should_stop && hooks.should_stop())) planned[k] = finished[k];
    report();
    fits->push_back(std::move(candidate));
  }
  *comparison = CompareFits(*fits);
  return true;
}

}  // namespace foothold
