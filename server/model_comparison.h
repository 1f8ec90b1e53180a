#pragma once
// Ranks several fits of one dataset: AICc differences and Akaike weights (Burnham &
// Anderson 2002, ch. 2.5 and 2.9), and the extra-sum-of-squares F-test between nested
// catalogue families.

#include <string>
#include <vector>

#include "server/fit_outcome.h"
#include "server/fit_request.h"
#include "server/fit_service.h"

namespace foothold {

struct ComparisonOptions {
  // Significance level of the nested F-test: p below this prefers the fuller model.
  // Default 0.05. In (0, 1).
  double f_test_level = 0.05;

  bool Validate(std::string* error) const;
};

// One candidate: the family name as asked for and the outcome of its fit.
struct CandidateFit {
  std::string family;
  FitOutcome outcome;
};

struct RankedModel {
  std::string family;
  int rank = 0;  // 1 is the best AICc
  int num_points = 0;
  int num_free = 0;
  double rss = 0;
  double aicc = 0;           // NaN when n - k - 1 <= 0
  double delta_aicc = 0;     // aicc - best aicc; NaN when aicc is
  double akaike_weight = 0;  // exp(-delta/2) / sum exp(-delta_j/2) over finite AICc; 0 else
  bool is_converged = false;
  int index = 0;  // position in the candidates given
};

// The extra-sum-of-squares F-test of a family against one that contains it:
// F = ((rss_s - rss_f) / (df_s - df_f)) / (rss_f / df_f) with df = n - free parameters.
struct NestedTest {
  std::string simpler;
  std::string fuller;
  std::string nesting;          // where the fuller model reduces to the simpler, e.g. "eta = 0"
  int df_extra = 0;             // df_s - df_f
  int df_residual = 0;          // df_f
  double f = 0;                 // clamped at 0 when the fuller fit ended above the simpler one
  double p_value = 1;           // upper tail of F(df_extra, df_residual)
  bool prefers_fuller = false;  // p_value < f_test_level
  // The nesting sits on a bound of the fuller model's parameter (eta in [0, 1]): the null
  // distribution is then a mixture and the F p value is conservative (Self & Liang 1987).
  bool on_boundary = false;
};

struct ModelComparison {
  std::vector<RankedModel> ranking;  // best AICc first; non-finite AICc last
  std::vector<NestedTest> nested;
  // ranking[0] when there is at least one finite AICc, else empty.
  std::string winner;
  // AICc of the runner-up minus the winner's (NaN with fewer than two finite AICc).
  double winner_margin = 0;
};

// How the catalogue families nest, the ones compare declares: line in polynomial (c2.. = 0),
// a polynomial in one of higher degree, exp_decay in biexp_decay (amplitude2 = 0) and in
// stretched_exp (beta = 1), logistic4 in logistic5 (asymmetry = 1), gaussian in
// pseudo_voigt (eta = 0) and lorentzian in pseudo_voigt (eta = 1). True with the condition
// in `nesting` and whether it sits on a parameter bound.
bool FamilyNestedIn(const ModelSpec& simpler, const ModelSpec& fuller, std::string* nesting,
                    bool* on_boundary);

// Ranks the candidates (same dataset, same weights) and tests every declared nested pair.
ModelComparison CompareFits(const std::vector<CandidateFit>& fits,
                            const ComparisonOptions& options = {});

// The name a family is ranked under: polynomial carries its degree ("polynomial(3)"),
// multi_gaussian and multi_lorentzian their peak count ("multi_gaussian(2)").
std::string ComparedLabel(const ModelSpec& spec);

// Fits `base` once per family (the normal fit path: guesses, multistart, verdict), with
// the family replacing base.model. False with the family named on bad input.
bool FitFamilies(const FitRequest& base, const std::vector<ModelSpec>& families,
                 std::vector<CandidateFit>* out, std::string* error);

// The families a request with "compare" fits: request.model first when it names a family,
// then the compare entries (request.model's family given again in compare is fitted once).
// `fields` names where each came from ("model", "compare[1]") for messages. False, naming
// the field, for an expression model, start/fix/bounds (each family starts from its own
// guesses, as `foothold compare`), an entry given twice, or fewer than two families.
bool ComparedFamilies(const FitRequest& request, std::vector<ModelSpec>* families,
                      std::vector<std::string>* fields, std::string* error);

// The daemon's admission check of a comparison: ComparedFamilies, then the admission check
// of the request once per family (no guesser, no fit); a message about one family names its
// entry ("compare[2].family: unknown family ..."). `max_parameters` gets the largest model.
bool ValidateComparisonForAdmission(const FitRequest& request, int* max_parameters,
                                    std::string* error);

// Runs a request with "compare" as one job: every family is prepared (guesses), then fitted
// in turn with the hooks. Progress is the starts finished and planned summed over the
// families (a family not yet run counts its planned budget); should_stop is checked within
// each fit and between them, so a cancelled comparison returns at once with the remaining
// families' fits marked cancelled. False with the entry named when a family cannot be fitted.
bool RunComparison(const FitRequest& request, const FitHooks& hooks,
                   std::vector<CandidateFit>* fits, ModelComparison* comparison,
                   std::string* error);

}  // namespace foothold
