// Reference library check: Debian python3-scipy (scipy.optimize.least_squares, method='lm',
// which is MINPACK's lmder) fits the same synthetic data from the same start as foothold's
// family model + MinimizeLevenbergMarquardt; both must reach the same minimum.
//
// The data are generated here with a fixed seed and Gaussian noise. Every problem of this file
// goes to tests/reference/scipy_fit.py in one batch (one JSON input file, one JSON output
// file), so /usr/bin/python3 (the interpreter that has numpy and scipy; scripts/setup.sh
// installs python3-scipy) starts once. The script writes the family formulas itself, in the
// catalogue's parameter order, and refuses a name mismatch. When /usr/bin/python3 cannot
// import scipy these tests fail; they never skip.

#include <sys/wait.h>
#include <unistd.h>

#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <iterator>
#include <memory>
#include <nlohmann/json.hpp>
#include <string>
#include <utility>
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

// One problem of the batch as the script reads it.
nlohmann::json BatchEntry(const std::string& label, const std::string& family,
                          const std::vector<std::string>& names, const Eigen::VectorXd& start,
                          const Dataset& data) {
  nlohmann::json entry;
  entry["label"] = label;
  entry["family"] = family;
  entry["names"] = names;
  entry["start"] = std::vector<double>(start.data(), start.data() + start.size());
  const Eigen::VectorXd x = data.predictors.col(0);
  entry["x"] = std::vector<double>(x.data(), x.data() + x.size());
  entry["y"] = std::vector<double>(data.response.data(), data.response.data() + data.NumPoints());
  return entry;
}

// The names check: each family with the catalogue's parameter names, plus one entry with two
// names swapped that the script must refuse. The script checks the names without fitting:
// these entries have no data (a fit of them would only cost time, up to max_nfev).
constexpr const char* kNamesPrefix = "names:";
constexpr const char* kSwappedNamesLabel = "names swapped:gaussian";
const std::vector<const char*> kNamesFamilies = {
    "line",      "polynomial", "gaussian",         "lorentzian",
    "exp_decay", "logistic4",  "michaelis_menten", "power_law"};

// A names-only entry of the batch.
nlohmann::json NamesEntry(const std::string& label, const std::string& family,
                          const std::vector<std::string>& names) {
  nlohmann::json entry;
  entry["label"] = label;
  entry["family"] = family;
  entry["names"] = names;
  entry["start"] = std::vector<double>(names.size(), 1.0);
  entry["x"] = nlohmann::json::array();
  entry["y"] = nlohmann::json::array();
  entry["names_only"] = true;
  return entry;
}

struct ReferenceFit {
  std::string label;
  std::string error;           // the script's refusal; empty when it accepted the problem
  bool is_names_only = false;  // accepted the names and fitted nothing, as asked
  std::vector<double> parameters;
  double rss = 0;
  int status = 0;
  int nfev = 0;
  std::string message;
};

// Every problem of this file, generated once, and scipy's results for all of them from one
// run of the reference script.
struct ScipyBatch {
  std::vector<std::unique_ptr<Generated>> generated;  // parallel to SyntheticProblems()
  std::string setup_error;  // a synthetic problem that could not be generated
  int exit_status = -1;     // of the script
  std::string output;       // what the script printed (stdout and stderr)
  std::string command;
  std::string read_error;  // the results file could not be read
  std::string scipy_version;
  std::vector<ReferenceFit> fits;

  bool HasRun() const { return exit_status == 0 && read_error.empty(); }
  const ReferenceFit* Find(const std::string& label) const {
    for (const ReferenceFit& f : fits) {
      if (f.label == label) return &f;
    }
    return nullptr;
  }
  std::string Diagnosis() const {
    return "reference script exit " + std::to_string(exit_status) + ": " + output + read_error +
           "\ncommand: " + command;
  }
};

bool ReadResults(const std::string& text, ScipyBatch* batch) {
  try {
    const nlohmann::json document = nlohmann::json::parse(text);
    batch->scipy_version = document.at("scipy_version").get<std::string>();
    for (const nlohmann::json& result : document.at("results")) {
      ReferenceFit fit;
      fit.label = result.at("label").get<std::string>();
      if (result.contains("error")) {
        fit.error = result.at("error").get<std::string>();
      } else if (result.value("names_only", false)) {
        fit.is_names_only = true;
      } else {
        fit.parameters = result.at("parameters").get<std::vector<double>>();
        fit.rss = result.at("rss").get<double>();
        fit.status = result.at("status").get<int>();
        fit.nfev = result.at("nfev").get<int>();
        fit.message = result.at("message").get<std::string>();
      }
      batch->fits.push_back(fit);
    }
  } catch (const nlohmann::json::exception& e) {
    batch->read_error = std::string("cannot read the reference output: ") + e.what();
    return false;
  }
  return true;
}

ScipyBatch RunScipyBatch() {
  ScipyBatch batch;
  nlohmann::json problems = nlohmann::json::array();
  const std::vector<SyntheticProblem>& synthetic = SyntheticProblems();
  for (size_t k = 0; k < synthetic.size(); ++k) {
    const SyntheticProblem& s = synthetic[k];
    auto g = std::make_unique<Generated>();
    std::string error;
    if (!Generate(s, kSeed + k, g.get(), &error)) {
      batch.setup_error += s.label + ": " + error + "\n";
    } else {
      problems.push_back(BatchEntry(s.label, s.request.name, g->family.model->ParameterNames(),
                                    g->start, g->problem.data));
    }
    batch.generated.push_back(std::move(g));
  }
  for (const char* name : kNamesFamilies) {
    const FamilyDescription* description = FindFamily(name);
    if (description == nullptr) continue;  // the names test reports it
    std::vector<std::string> names;
    for (const FamilyParameter& p : description->parameters) names.push_back(p.name);
    problems.push_back(NamesEntry(kNamesPrefix + std::string(name), name, names));
    if (std::string(name) == "gaussian") {
      std::swap(names[0], names[1]);
      problems.push_back(NamesEntry(kSwappedNamesLabel, name, names));
    }
  }

  const std::string stem = (std::filesystem::temp_directory_path() /
                            ("foothold_scipy_batch_" + std::to_string(getpid())))
                               .string();
  const std::string input = stem + "_in.json";
  const std::string results = stem + "_out.json";
  {
    std::ofstream out(input);
    out << nlohmann::json{{"problems", problems}}.dump();
    if (!out) {
      batch.read_error = "cannot write " + input;
      return batch;
    }
  }
  batch.command = std::string(kPython) + " " +
                  ShellQuote(std::string(FOOTHOLD_SOURCE_DIR) + "/tests/reference/scipy_fit.py") +
                  " --batch " + ShellQuote(input) + " --output " + ShellQuote(results) + " 2>&1";
  batch.exit_status = RunCommand(batch.command, &batch.output);
  if (batch.exit_status == 0) {
    std::ifstream in(results);
    const std::string text((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
    ReadResults(text, &batch);
  }
  std::filesystem::remove(input);
  std::filesystem::remove(results);
  return batch;
}

const ScipyBatch& Scipy() {
  static const ScipyBatch batch = RunScipyBatch();
  return batch;
}

TEST_CASE("Debian python3-scipy: /usr/bin/python3 imports numpy and scipy and runs the batch",
          "[certification][scipy]") {
  const ScipyBatch& batch = Scipy();
  INFO(kReferenceLibrary << " is required: " << kPython
                         << " could not import scipy or run the reference script. Install it "
                            "with scripts/setup.sh (apt-get install python3-scipy). "
                         << batch.Diagnosis());
  REQUIRE(batch.HasRun());
  CHECK(!batch.scipy_version.empty());
}

TEST_CASE("Debian python3-scipy: the script's parameter names are the catalogue's",
          "[certification][scipy]") {
  // The script pairs values by position; the names it knows must be the catalogue's names
  // (FamilyCatalogue(), default options) for every family used here.
  const ScipyBatch& batch = Scipy();
  INFO(batch.Diagnosis());
  REQUIRE(batch.HasRun());
  for (const char* name : kNamesFamilies) {
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
    // The reference script checked the catalogue's names against its own list.
    const ReferenceFit* fit = batch.Find(kNamesPrefix + std::string(name));
    REQUIRE(fit != nullptr);
    INFO("script: " << fit->error);
    CHECK(fit->error.empty());
    CHECK(fit->is_names_only);
  }
  // And it refuses a list it does not know, so the check above can fail.
  const ReferenceFit* swapped = batch.Find(kSwappedNamesLabel);
  REQUIRE(swapped != nullptr);
  INFO("script: " << swapped->error);
  CHECK(swapped->error.find("differ from the script") != std::string::npos);
}

TEST_CASE(
    "Debian python3-scipy (scipy.optimize.least_squares, method='lm') and foothold's "
    "Levenberg-Marquardt reach the same minimum on synthetic family data",
    "[certification][scipy]") {
  const std::vector<SyntheticProblem>& problems = SyntheticProblems();
  REQUIRE(problems.size() >= 10);
  const ScipyBatch& batch = Scipy();
  INFO("setup error: " << batch.setup_error);
  REQUIRE(batch.setup_error.empty());
  INFO(batch.Diagnosis());
  REQUIRE(batch.HasRun());
  std::printf("\nReference: %s %s\n", kReferenceLibrary, batch.scipy_version.c_str());
  std::printf("%-17s %-17s %4s %13s %9s %9s %5s %5s  %s\n", "problem", "family", "n", "rss (scipy)",
              "d(rss)", "max d(b)", "iter", "nfev", "foothold termination");
  for (size_t k = 0; k < problems.size(); ++k) {
    const SyntheticProblem& s = problems[k];
    INFO("problem " << s.label << " (family " << s.request.name << ") against "
                    << kReferenceLibrary);
    const Generated& g = *batch.generated[k];
    const ReferenceFit* found = batch.Find(s.label);
    REQUIRE(found != nullptr);
    const ReferenceFit& reference = *found;
    INFO("reference error: " << reference.error);
    REQUIRE(reference.error.empty());
    INFO("scipy " << batch.scipy_version << " status " << reference.status << ": "
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

    // Same minimum as Debian python3-scipy's least_squares(method='lm') (MINPACK lmder).
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
