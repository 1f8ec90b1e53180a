#include "server/fit_start.h"

#include <cmath>
#include <limits>
#include <sstream>

#include "heuristics/guess.h"

namespace foothold {
namespace {

constexpr double kInfinity = std::numeric_limits<double>::infinity();

std::string FormatNumber(double value) {
  std::ostringstream out;
  out << value;
  return out.str();
}

std::string Join(const std::vector<std::string>& names) {
  std::string joined;
  for (const std::string& name : names) {
    if (!joined.empty()) joined += ", ";
    joined += name;
  }
  return joined;
}

int ParameterIndex(const std::vector<std::string>& names, const std::string& name) {
  for (size_t j = 0; j < names.size(); ++j) {
    if (names[j] == name) return static_cast<int>(j);
  }
  return -1;
}

std::string UnknownParameter(const std::string& field, const std::string& name,
                             const std::vector<std::string>& names) {
  return field + ": unknown parameter '" + name + "' (the model's parameters: " + Join(names) + ")";
}

bool ApplyBounds(const FitRequest& request, const std::vector<FamilyParameter>& defaults,
                 Problem* problem, std::string* error) {
  const std::vector<std::string>& names = problem->model->ParameterNames();
  const int p = static_cast<int>(names.size());
  problem->lower = Eigen::VectorXd::Constant(p, -kInfinity);
  problem->upper = Eigen::VectorXd::Constant(p, kInfinity);
  for (size_t j = 0; j < defaults.size() && static_cast<int>(j) < p; ++j) {
    problem->lower[j] = defaults[j].default_lower;
    problem->upper[j] = defaults[j].default_upper;
  }
  for (const NamedBounds& bounds : request.bounds) {
    const int j = ParameterIndex(names, bounds.name);
    if (j < 0) {
      *error = UnknownParameter("bounds", bounds.name, names);
      return false;
    }
    problem->lower[j] = bounds.lower;
    problem->upper[j] = bounds.upper;
  }
  return true;
}

bool ApplyGivenValues(const FitRequest& request, Problem* problem, Eigen::VectorXd* start,
                      std::string* error) {
  const std::vector<std::string>& names = problem->model->ParameterNames();
  const int p = static_cast<int>(names.size());
  *start = Eigen::VectorXd::Constant(p, std::numeric_limits<double>::quiet_NaN());
  problem->is_fixed.assign(p, false);
  for (const NamedValue& fixed : request.fix) {
    const int j = ParameterIndex(names, fixed.name);
    if (j < 0) {
      *error = UnknownParameter("fix", fixed.name, names);
      return false;
    }
    problem->is_fixed[j] = true;
    (*start)[j] = fixed.value;
  }
  for (const NamedValue& given : request.start) {
    const int j = ParameterIndex(names, given.name);
    if (j < 0) {
      *error = UnknownParameter("start", given.name, names);
      return false;
    }
    if (problem->is_fixed[j]) {
      *error = "start." + given.name + ": the parameter is also in fix; give it in one place";
      return false;
    }
    (*start)[j] = given.value;
  }
  return true;
}

// The guesser's candidates for the problem: the family's, or the generic one for an
// expression. False (with the guesser's reason) when it has none.
bool GuessCandidates(const FamilyRequest* family, const Problem& problem, GuessResult* guess,
                     std::string* error) {
  const bool ok = family ? GuessFamily(*family, *problem.model, problem.data, problem.lower,
                                       problem.upper, GuessOptions{}, guess, error)
                         : GuessGeneric(*problem.model, problem.data, problem.lower, problem.upper,
                                        GuessOptions{}, guess, error);
  if (ok && guess->candidates.empty()) *error = "no candidate";
  return ok && !guess->candidates.empty();
}

// Seeded starts in priority order: the user's own start when it is complete, then every
// guess candidate with the values the user gave (start and fix) in place.
void BuildCandidates(const Eigen::VectorXd& given, const GuessResult* guess, bool complete,
                     StartChoice* choice) {
  if (complete) choice->candidates.push_back({"user", given});
  if (!guess) return;
  for (const GuessCandidate& candidate : guess->candidates) {
    Eigen::VectorXd values = candidate.parameters;
    for (Eigen::Index j = 0; j < given.size(); ++j) {
      if (!std::isnan(given[j])) values[j] = given[j];
    }
    choice->candidates.push_back({"guess:" + candidate.name, values});
  }
}

}  // namespace

bool ChooseStart(const FitRequest& request, const FamilyRequest* family,
                 const std::vector<FamilyParameter>& defaults, Problem* problem, StartChoice* out,
                 std::string* error) {
  StartChoice choice;
  if (!ApplyBounds(request, defaults, problem, error)) return false;
  if (!ApplyGivenValues(request, problem, &choice.start, error)) return false;
  const std::vector<std::string>& names = problem->model->ParameterNames();
  // Checked before guessing, so too few points is named as such, not as a failed guess.
  const int num_free = problem->NumFree();
  if (problem->data.NumPoints() < num_free) {
    std::ostringstream message;
    message << "data: " << problem->data.NumPoints() << " points but the model has " << num_free
            << " free parameters; need at least " << num_free << " points";
    *error = message.str();
    return false;
  }
  std::vector<int> missing;
  for (int j = 0; j < static_cast<int>(names.size()); ++j) {
    if (std::isnan(choice.start[j])) missing.push_back(j);
  }
  // The guesser reads the data before the start is checked: a bad start the user gave is
  // still reported below, by name. A complete user start needs no guess, but the guesses
  // still join the seeded starts when the guesser has them.
  GuessResult guess;
  std::string guess_error;
  const bool has_guess = GuessCandidates(family, *problem, &guess, &guess_error);
  if (!missing.empty() && !has_guess) {
    const std::string guesser = family ? "the " + family->name + " guesser" : "the generic guesser";
    *error = "start." + names[missing.front()] + ": no start value, and " + guesser +
             " could not make one (" + guess_error + "); give it in start";
    return false;
  }
  BuildCandidates(choice.start, has_guess ? &guess : nullptr, missing.empty(), &choice);
  choice.start = choice.candidates.front().parameters;
  choice.origin = choice.candidates.front().origin;
  for (int j : missing) choice.guessed.push_back(names[j]);
  if (has_guess) {
    choice.warnings = guess.warnings;
    choice.box = SearchBoxFromGuess(*problem, choice.candidates, guess.scale, guess.log_scale);
  }
  for (int j = 0; j < static_cast<int>(names.size()); ++j) {
    const bool guessed = ParameterIndex(choice.guessed, names[j]) >= 0;
    const std::string field = guessed                ? "the guessed start of " + names[j]
                              : problem->is_fixed[j] ? "fix." + names[j]
                                                     : "start." + names[j];
    const double value = choice.start[j];
    if (value < problem->lower[j] || value > problem->upper[j]) {
      *error = field + " = " + FormatNumber(value) + " is outside its bounds [" +
               FormatNumber(problem->lower[j]) + ", " + FormatNumber(problem->upper[j]) + "]";
      return false;
    }
  }
  *out = std::move(choice);
  return true;
}

}  // namespace foothold
