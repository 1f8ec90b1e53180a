// Reference library check: Debian python3-scipy (scipy.optimize.least_squares, method='lm',
// which is MINPACK's lmder) fits the same synthetic data from the same start as foothold's
// family model + MinimizeLevenbergMarquardt; both must reach the same minimum.
//
// The data are generated here with a fixed seed and Gaussian noise, written to a temporary
// CSV, and fitted by tests/reference/scipy_fit.py under /usr/bin/python3 (the interpreter
// that has numpy and scipy; scripts/setup.sh installs python3-scipy). The script writes the
// family formulas itself, in the catalogue's parameter order, and refuses a name mismatch.
// When /usr/bin/python3 cannot import scipy these tests fail; they never skip.

#include <sys/wait.h>
#include <unistd.h>

#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "engine/solve/levenberg_marquardt.h"
#include "engine/solve/problem.h"
#include "heuristics/families/catalogue.h"
#include "tests/certification/certification_support.h"

namespace foothold {
namespace certification {
namespace {

constexpr const char* kReferenceLibrary =
    "Debian python3-scipy (scipy.optimize.least_squares, method='lm')";
constexpr const char* kPython = "/usr/bin/python3";
// Same minimum: the residual sums of squares agree to this relative difference...
constexpr double kRssRelativeTolerance = 1e-8;
// ...and every parameter to this relative difference.
constexpr double kParameterRelativeTolerance = 1e-6;
// Seed of the synthetic data and of the start perturbations.
constexpr std::uint64_t kSeed = 20261201;

struct SyntheticProblem {
  std::string label;
  FamilyRequest request;
  std::vector<double> truth;  // catalogue parameter order
  double x_lo = 0;
  double x_hi = 1;
  int num_points = 0;
  bool is_log_spaced = false;
  double noise_sd = 0;            // additive Gaussian noise on y
  double start_perturbation = 0;  // start_j = truth_j * (1 + u_j), u_j uniform in +-this
};

FamilyRequest Family(const std::string& name, int degree = 2) {
  FamilyRequest request;
  request.name = name;
  request.degree = degree;
  return request;
}

const std::vector<SyntheticProblem>& SyntheticProblems() {
  static const std::vector<SyntheticProblem> problems = {
      {"line", Family("line"), {2.5, -1.3}, 0.0, 10.0, 40, false, 0.3, 0.3},
      {"cubic", Family("polynomial", 3), {1.0, -2.0, 0.5, 0.08}, -3.0, 4.0, 50, false, 0.2, 0.3},
      {"quadratic", Family("polynomial", 2), {3.0, 1.5, -0.7}, -2.0, 2.0, 25, false, 0.05, 0.3},
      {"gaussian_wide", Family("gaussian"), {5.0, 3.0, 0.8, 0.5}, 0.0, 6.0, 61, false, 0.1, 0.1},
      {"gaussian_narrow",
       Family("gaussian"),
       {120.0, -2.0, 0.3, 10.0},
       -4.0,
       0.0,
       81,
       false,
       3.0,
       0.1},
      {"lorentzian_a",
       Family("lorentzian"),
       {10.0, -1.0, 0.5, 1.0},
       -5.0,
       3.0,
       81,
       false,
       0.2,
       0.1},
      {"lorentzian_b",
       Family("lorentzian"),
       {2.0, 50.0, 4.0, 0.3},
       30.0,
       70.0,
       101,
       false,
       0.05,
       0.1},
      {"exp_decay_a", Family("exp_decay"), {8.0, 2.5, 0.3}, 0.0, 12.0, 60, false, 0.1, 0.2},
      {"exp_decay_b", Family("exp_decay"), {1500.0, 0.04, 20.0}, 0.0, 0.3, 100, false, 15.0, 0.2},
      {"logistic4", Family("logistic4"), {5.0, 100.0, -6.5, 1.2}, -9.0, -4.0, 24, false, 3.0, 0.1},
      {"michaelis_menten", Family("michaelis_menten"), {12.0, 3.5}, 0.2, 30.0, 16, true, 0.2, 0.3},
      {"power_law", Family("power_law"), {2.0, 1.7}, 0.5, 10.0, 30, false, 0.3, 0.1},
  };
  return problems;
}

struct Generated {
  FamilyInstance family;
  Problem problem;
  Eigen::VectorXd start;
};

bool Generate(const SyntheticProblem& s, std::uint64_t seed, Generated* out, std::string* error) {
  if (!InstantiateFamily(s.request, &out->family, error)) return false;
  const Model& model = *out->family.model;
  if (model.NumParameters() != static_cast<int>(s.truth.size())) {
    *error = "family has " + std::to_string(model.NumParameters()) + " parameters, truth has " +
             std::to_string(s.truth.size());
    return false;
  }
  SeededNormal rng(seed);
  Dataset& data = out->problem.data;
  data.predictor_names = model.PredictorNames();
  data.predictors.resize(s.num_points, 1);
  for (int i = 0; i < s.num_points; ++i) {
    const double t = static_cast<double>(i) / (s.num_points - 1);
    data.predictors(i, 0) =
        s.is_log_spaced ? s.x_lo * std::pow(s.x_hi / s.x_lo, t) : s.x_lo + t * (s.x_hi - s.x_lo);
  }
  data.response.resize(s.num_points);
  model.Evaluate(data.predictors, s.truth.data(), data.response.data());
  for (int i = 0; i < s.num_points; ++i) data.response[i] += s.noise_sd * rng.Normal();
  out->start.resize(s.truth.size());
  for (size_t j = 0; j < s.truth.size(); ++j) {
    out->start[j] = s.truth[j] * (1.0 + rng.Uniform(-s.start_perturbation, s.start_perturbation));
  }
  out->problem.model = out->family.model.get();
  return out->problem.Validate(error);
}

// Runs a shell command, returning its exit status and everything it printed.
int RunCommand(const std::string& command, std::string* output) {
  output->clear();
  FILE* pipe = popen(command.c_str(), "r");
  if (!pipe) return -1;
  char buffer[4096];
  size_t count = 0;
  while ((count = std::fread(buffer, 1, sizeof(buffer), pipe)) > 0) output->append(buffer, count);
  const int status = pclose(pipe);
  return WIFEXITED(status) ? WEXITSTATUS(status) : -1;
}

std::string ShellQuote(const std::string& text) {
  std::string quoted = "'";
  for (char c : text) {
    if (c == '\'') {
      quoted += "'\\''";
    } else {
      quoted += c;
    }
  }
  return quoted + "'";
}

struct ReferenceFit {
  std::vector<double> parameters;
  double rss = 0;
  int status = 0;
  int nfev = 0;
  std::string message;
  std::string version;
};

// Writes the data to a temporary CSV and fits it with the reference script.
bool FitWithScipy(const std::string& family_name, const Generated& g, const std::string& label,
                  ReferenceFit* fit, std::string* error) {
  const std::filesystem::path csv =
      std::filesystem::temp_directory_path() /
      ("foothold_scipy_" + label + "_" + std::to_string(getpid()) + ".csv");
  {
    std::ofstream out(csv);
    out << "x,y\n";
    for (int i = 0; i < g.problem.data.NumPoints(); ++i) {
      out << RoundTrip(g.problem.data.predictors(i, 0)) << ","
          << RoundTrip(g.problem.data.response[i]) << "\n";
    }
    if (!out) {
      *error = "cannot write " + csv.string();
      return false;
    }
  }
  std::string start_text;
  std::string names_text;
  const std::vector<std::string>& names = g.family.model->ParameterNames();
  for (int j = 0; j < g.start.size(); ++j) {
    start_text += (j ? "," : "") + RoundTrip(g.start[j]);
    names_text += (j ? "," : "") + names[j];
  }
  const std::string command =
      std::string(kPython) + " " +
      ShellQuote(std::string(FOOTHOLD_SOURCE_DIR) + "/tests/reference/scipy_fit.py") +
      " --family " + ShellQuote(family_name) + " --data " + ShellQuote(csv.string()) + " --start " +
      ShellQuote(start_text) + " --names " + ShellQuote(names_text) + " 2>&1";
  std::string output;
  const int status = RunCommand(command, &output);
  std::filesystem::remove(csv);
  if (status != 0) {
    *error = "reference script failed (exit " + std::to_string(status) + "): " + output +
             "\ncommand: " + command;
    return false;
  }
  try {
    const nlohmann::json result = nlohmann::json::parse(output);
    fit->parameters = result.at("parameters").get<std::vector<double>>();
    fit->rss = result.at("rss").get<double>();
    fit->status = result.at("status").get<int>();
    fit->nfev = result.at("nfev").get<int>();
    fit->message = result.at("message").get<std::string>();
    fit->version = result.at("scipy_version").get<std::string>();
  } catch (const nlohmann::json::exception& e) {
    *error = std::string("cannot read the reference output: ") + e.what() + "\n" + output;
    return false;
  }
  return true;
}

TEST_CASE("Debian python3-scipy: /usr/bin/python3 imports numpy and scipy",
          "[certification][scipy]") {
  std::string output;
  const int status = RunCommand(
      std::string(kPython) + " -c \"import numpy, scipy.optimize; print(scipy.__version__)\" 2>&1",
      &output);
  INFO(kReferenceLibrary << " is required: " << kPython
                         << " could not import scipy. Install it with scripts/setup.sh "
                            "(apt-get install python3-scipy). Output: "
                         << output);
  REQUIRE(status == 0);
}

TEST_CASE("Debian python3-scipy: the script's parameter names are the catalogue's",
          "[certification][scipy]") {
  // The script pairs values by position; the names it knows must be the catalogue's names
  // (FamilyCatalogue(), default options) for every family used here.
  for (const char* name : {"line", "polynomial", "gaussian", "lorentzian", "exp_decay", "logistic4",
                           "michaelis_menten", "power_law"}) {
    INFO("family " << name);
    const FamilyDescription* description = FindFamily(name);
    REQUIRE(description != nullptr);
    const bool in_catalogue =
        std::any_of(FamilyCatalogue().begin(), FamilyCatalogue().end(),
                    [&](const FamilyDescription& d) { return d.name == name; });
    CHECK(in_catalogue);
    FamilyInstance instance;
    std::string error;
    const bool is_instantiated = InstantiateFamily(Family(name), &instance, &error);
    INFO("error: " << error);
    REQUIRE(is_instantiated);
    std::vector<std::string> catalogue_names;
    for (const FamilyParameter& p : description->parameters) catalogue_names.push_back(p.name);
    CHECK(instance.model->ParameterNames() == catalogue_names);
    // The reference script checks the names passed to it against its own list.
    std::string start_text;
    std::string names_text;
    for (size_t j = 0; j < catalogue_names.size(); ++j) {
      start_text += (j ? "," : "") + std::string("1");
      names_text += (j ? "," : "") + catalogue_names[j];
    }
    const std::filesystem::path csv = std::filesystem::temp_directory_path() /
                                      ("foothold_names_" + std::to_string(getpid()) + ".csv");
    std::ofstream(csv) << "x,y\n1,1\n2,2\n3,3\n4,4.5\n5,5\n6,6.5\n";
    std::string output;
    const int status = RunCommand(
        std::string(kPython) + " " +
            ShellQuote(std::string(FOOTHOLD_SOURCE_DIR) + "/tests/reference/scipy_fit.py") +
            " --family " + name + " --data " + ShellQuote(csv.string()) + " --start " + start_text +
            " --names " + ShellQuote(names_text) + " 2>&1",
        &output);
    std::filesystem::remove(csv);
    INFO("script output: " << output);
    CHECK(output.find("differ from the script") == std::string::npos);
    CHECK(status == 0);
  }
}

TEST_CASE(
    "Debian python3-scipy (scipy.optimize.least_squares, method='lm') and foothold's "
    "Levenberg-Marquardt reach the same minimum on synthetic family data",
    "[certification][scipy]") {
  const std::vector<SyntheticProblem>& problems = SyntheticProblems();
  REQUIRE(problems.size() >= 10);
  std::printf("\nReference: %s\n", kReferenceLibrary);
  std::printf("%-17s %-17s %4s %13s %9s %9s %5s %5s  %s\n", "problem", "family", "n", "rss (scipy)",
              "d(rss)", "max d(b)", "iter", "nfev", "foothold termination");
  for (size_t k = 0; k < problems.size(); ++k) {
    const SyntheticProblem& s = problems[k];
    INFO("problem " << s.label << " (family " << s.request.name << ") against "
                    << kReferenceLibrary);
    Generated g;
    std::string error;
    const bool is_generated = Generate(s, kSeed + k, &g, &error);
    INFO("setup error: " << error);
    REQUIRE(is_generated);

    ReferenceFit reference;
    const bool is_fitted = FitWithScipy(s.request.name, g, s.label, &reference, &error);
    INFO("reference error: " << error);
    REQUIRE(is_fitted);
    INFO("scipy " << reference.version << " status " << reference.status << ": "
                  << reference.message);
    CHECK(reference.status > 0);
    REQUIRE(reference.parameters.size() == static_cast<size_t>(g.start.size()));

    const LocalFitSummary summary =
        MinimizeLevenbergMarquardt(g.problem, g.start, LevenbergMarquardtOptions{});
    INFO("foothold: " << summary.BriefReport());
    CHECK(summary.IsConverged());

    const double rss_difference = RelativeDifference(summary.final_cost, reference.rss);
    double max_parameter_difference = 0;
    for (size_t j = 0; j < reference.parameters.size(); ++j) {
      const double d = j < static_cast<size_t>(summary.parameters.size())
                           ? RelativeDifference(summary.parameters[j], reference.parameters[j])
                           : 1.0;
      max_parameter_difference = std::max(max_parameter_difference, d);
    }
    std::printf("%-17s %-17s %4d %13.6e %9.1e %9.1e %5d %5d  %s\n", s.label.c_str(),
                s.request.name.c_str(), s.num_points, reference.rss, rss_difference,
                max_parameter_difference, summary.num_iterations, reference.nfev,
                ToString(summary.termination));
    std::fflush(stdout);

    INFO("rss foothold " << RoundTrip(summary.final_cost) << " vs scipy "
                         << RoundTrip(reference.rss));
    CHECK(rss_difference <= kRssRelativeTolerance);
    const std::vector<std::string>& names = g.family.model->ParameterNames();
    for (size_t j = 0; j < reference.parameters.size(); ++j) {
      INFO("parameter " << names[j] << ": foothold " << RoundTrip(summary.parameters[j])
                        << " vs scipy " << RoundTrip(reference.parameters[j]));
      CHECK(RelativeDifference(summary.parameters[j], reference.parameters[j]) <=
            kParameterRelativeTolerance);
    }
  }
}

}  // namespace
}  // namespace certification
}  // namespace foothold
