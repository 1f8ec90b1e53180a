#pragma once
// The per-family guessers behind GuessFamily. Each reads the prepared curve, proposes named
// candidates into the set (which refines linear parameters, scores and ranks them) and sets
// the scales; false with a precise message when the data cannot support the family.

#include <string>

#include "heuristics/families/catalogue.h"
#include "heuristics/families/guess_common.h"
#include "heuristics/families/guess_profile.h"

namespace foothold {
namespace guess {

struct GuessContext {
  const FamilyRequest* request = nullptr;
  const Curve* curve = nullptr;
  CandidateSet* set = nullptr;
};

// line, polynomial: exact linear least squares in scaled x (guess_polynomial.cpp).
bool GuessPolynomialFamily(const GuessContext& context, std::string* error);
// gaussian, lorentzian, pseudo_voigt, multi_gaussian, multi_lorentzian (guess_peaks.cpp).
bool GuessPeakFamily(const GuessContext& context, std::string* error);
// exp_decay, biexp_decay, stretched_exp (guess_decays.cpp).
bool GuessDecayFamily(const GuessContext& context, std::string* error);
// logistic4, logistic5, michaelis_menten, hill_binding (guess_dose_response.cpp).
bool GuessDoseResponseFamily(const GuessContext& context, std::string* error);
// sine, damped_sine (guess_oscillations.cpp).
bool GuessOscillationFamily(const GuessContext& context, std::string* error);
// power_law, gompertz, arrhenius (guess_growth.cpp).
bool GuessGrowthFamily(const GuessContext& context, std::string* error);

// Indices of the parameters each family is linear in (refined after every candidate).
std::vector<int> FamilyLinearParameters(const FamilyRequest& request, const Model& model);

}  // namespace guess
}  // namespace foothold
