// Guess time against the time of the local fit that follows, per family, on the corpus's
// largest datasets (5000 points). A plain harness: no benchmark library needed.
//
//   foothold_guess_timing [repetitions]      (default 20)
//
// Prints one row per family: median guess and fit processor times and their ratio; the
// target is a guess within 5% of the fit.

#include <algorithm>
#include <cstdio>
#include <cstdlib>
#include <ctime>
#include <string>
#include <vector>

#include "corpus/corpus.h"
#include "engine/solve/levenberg_marquardt.h"
#include "heuristics/guess.h"

namespace {

double Median(std::vector<double> values) {
  std::sort(values.begin(), values.end());
  return values[values.size() / 2];
}

double Seconds(std::clock_t from, std::clock_t to) {
  return static_cast<double>(to - from) / CLOCKS_PER_SEC;
}

}  // namespace

int main(int argc, char** argv) {
  using namespace foothold;
  const int repetitions = argc > 1 ? std::max(1, std::atoi(argv[1])) : 20;
  // The corpus's second case of every family has the most points.
  const std::vector<corpus::CorpusCase> cases = corpus::GenerateCorpus(20261201, 2);
  std::printf("| family | points | guess ms | fit ms | guess / fit |\n|---|---|---|---|---|\n");
  double total_guess = 0, total_fit = 0;
  for (const corpus::CorpusCase& c : cases) {
    if (c.x.size() != corpus::kMaxPoints) continue;
    FamilyInstance instance;
    std::string error;
    if (!InstantiateFamily(c.request, &instance, &error)) continue;
    Problem problem;
    problem.model = instance.model.get();
    problem.data.predictor_names = {"x"};
    problem.data.predictors = c.x;
    problem.data.response = c.y;
    const int p = instance.model->NumParameters();
    problem.lower.resize(p);
    problem.upper.resize(p);
    for (int j = 0; j < p; ++j) {
      problem.lower[j] = instance.parameters[j].default_lower;
      problem.upper[j] = instance.parameters[j].default_upper;
    }
    std::vector<double> guess_seconds, fit_seconds;
    for (int r = 0; r < repetitions; ++r) {
      GuessResult guess;
      const std::clock_t start = std::clock();
      if (!GuessFamily(c.request, *instance.model, problem.data, Eigen::VectorXd(),
                       Eigen::VectorXd(), GuessOptions(), &guess, &error)) {
        std::printf("%s: %s\n", c.label.c_str(), error.c_str());
        break;
      }
      const std::clock_t guessed = std::clock();
      MinimizeLevenbergMarquardt(problem, guess.candidates.front().parameters,
                                 LevenbergMarquardtOptions());
      const std::clock_t fitted = std::clock();
      guess_seconds.push_back(Seconds(start, guessed));
      fit_seconds.push_back(Seconds(guessed, fitted));
    }
    if (guess_seconds.empty()) continue;
    const double g = Median(guess_seconds), f = Median(fit_seconds);
    total_guess += g;
    total_fit += f;
    std::printf("| %s | %d | %.3f | %.3f | %.1f%% |\n", c.request.name.c_str(),
                static_cast<int>(c.x.size()), 1e3 * g, 1e3 * f, 100 * g / f);
  }
  std::printf("| all | | %.3f | %.3f | %.1f%% |\n", 1e3 * total_guess, 1e3 * total_fit,
              100 * total_guess / total_fit);
  return 0;
}
