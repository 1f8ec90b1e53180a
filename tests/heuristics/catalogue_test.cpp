// Tests of the family catalogue: the table, its metadata, instantiation, the error messages,
// and that docs/families.md documents every family.

#include "heuristics/families/catalogue.h"

#include <algorithm>
#include <catch2/catch.hpp>
#include <cctype>
#include <cmath>
#include <fstream>
#include <set>
#include <sstream>
#include <string>
#include <vector>

namespace foothold {
namespace {

constexpr double kInf = std::numeric_limits<double>::infinity();

// DESIGN.md section 3: the family names and their order are part of the API.
const std::vector<std::string> kDesignOrder = {
    "line",           "polynomial",       "gaussian",         "lorentzian",   "pseudo_voigt",
    "multi_gaussian", "multi_lorentzian", "exp_decay",        "biexp_decay",  "stretched_exp",
    "logistic4",      "logistic5",        "michaelis_menten", "hill_binding", "power_law",
    "sine",           "damped_sine",      "gompertz",         "arrhenius"};

std::string InstantiateError(const FamilyRequest& request) {
  FamilyInstance instance;
  std::string error;
  CHECK_FALSE(InstantiateFamily(request, &instance, &error));
  CHECK(instance.model == nullptr);
  return error;
}

FamilyRequest Named(const std::string& name) {
  FamilyRequest request;
  request.name = name;
  return request;
}

const FamilyParameter& ParameterNamed(const FamilyDescription& d, const std::string& name) {
  for (const FamilyParameter& p : d.parameters) {
    if (p.name == name) return p;
  }
  FAIL("family " << d.name << " has no parameter " << name);
  return d.parameters.front();
}

std::string Stem(std::string name) {
  while (!name.empty() && std::isdigit(static_cast<unsigned char>(name.back()))) name.pop_back();
  return name;
}

TEST_CASE("Catalogue: families appear once each, in the design's order", "[heuristics]") {
  std::vector<std::string> names;
  for (const FamilyDescription& d : FamilyCatalogue()) names.push_back(d.name);
  CHECK(names == kDesignOrder);
  const std::set<std::string> unique(names.begin(), names.end());
  CHECK(unique.size() == names.size());
  for (const std::string& name : names) {
    REQUIRE(FindFamily(name) != nullptr);
    CHECK(FindFamily(name)->name == name);
  }
  CHECK(FindFamily("gausian") == nullptr);
}

TEST_CASE("Catalogue: every description and parameter is documented and bounded", "[heuristics]") {
  for (const FamilyDescription& d : FamilyCatalogue()) {
    INFO(d.name);
    CHECK_FALSE(d.formula.empty());
    CHECK_FALSE(d.summary.empty());
    CHECK_FALSE(d.guess_method.empty());
    CHECK(d.guess_method.find('\n') == std::string::npos);
    REQUIRE_FALSE(d.parameters.empty());
    std::set<std::string> seen;
    for (const FamilyParameter& p : d.parameters) {
      INFO(p.name);
      CHECK_FALSE(p.name.empty());
      CHECK_FALSE(p.meaning.empty());
      CHECK(p.default_lower <= p.default_upper);
      CHECK_FALSE(std::isnan(p.default_lower));
      CHECK_FALSE(std::isnan(p.default_upper));
      CHECK(seen.insert(p.name).second);
    }
  }
}

TEST_CASE("Catalogue: every family instantiates with its listed parameters", "[heuristics]") {
  for (const FamilyDescription& d : FamilyCatalogue()) {
    INFO(d.name);
    FamilyInstance instance;
    std::string error;
    REQUIRE(InstantiateFamily(Named(d.name), &instance, &error));
    CHECK(error.empty());
    REQUIRE(instance.model != nullptr);
    const std::vector<std::string>& names = instance.model->ParameterNames();
    REQUIRE(names.size() == d.parameters.size());
    REQUIRE(instance.parameters.size() == d.parameters.size());
    for (size_t j = 0; j < names.size(); ++j) {
      CHECK(names[j] == d.parameters[j].name);
      CHECK(instance.parameters[j].name == names[j]);
    }
    // The listing's linear parameters agree with the model's declaration.
    std::vector<std::string> linear;
    for (int j : instance.model->LinearParameters()) linear.push_back(names[j]);
    CHECK(linear == d.linear_parameters);
    // Every declared permutation symmetry is described (the text may also describe others,
    // e.g. a phase period). The multi_* families have theirs from two peaks on.
    FamilyRequest two_members = Named(d.name);
    if (std::find(d.options.begin(), d.options.end(), "peaks") != d.options.end()) {
      two_members.peaks = 2;
    }
    FamilyInstance symmetric;
    REQUIRE(InstantiateFamily(two_members, &symmetric, &error));
    if (!symmetric.model->Symmetries().empty()) CHECK_FALSE(d.symmetries.empty());

    // A point inside the default bounds gives a finite model on positive x.
    std::vector<double> p;
    for (const FamilyParameter& parameter : instance.parameters) {
      if (std::isfinite(parameter.default_lower) && std::isfinite(parameter.default_upper)) {
        p.push_back(0.5 * (parameter.default_lower + parameter.default_upper));
      } else if (std::isfinite(parameter.default_lower)) {
        p.push_back(parameter.default_lower + 1.0);
      } else {
        p.push_back(1.0);
      }
    }
    Eigen::MatrixXd x = Eigen::VectorXd::LinSpaced(9, 1.0, 3.0);
    Eigen::VectorXd values(x.rows());
    Eigen::MatrixXd jacobian(x.rows(), instance.model->NumParameters());
    instance.model->EvaluateWithJacobian(x, p.data(), values.data(), jacobian.data());
    CHECK(values.allFinite());
    CHECK(jacobian.allFinite());
  }
}

TEST_CASE("Catalogue: degree and peak count shape the parameter list", "[heuristics]") {
  FamilyInstance instance;
  std::string error;
  FamilyRequest polynomial = Named("polynomial");
  polynomial.degree = 4;
  REQUIRE(InstantiateFamily(polynomial, &instance, &error));
  CHECK(instance.model->ParameterNames() == std::vector<std::string>{"c0", "c1", "c2", "c3", "c4"});
  CHECK(instance.parameters.size() == 5);
  CHECK(instance.model->LinearParameters().size() == 5);
  for (int degree : {0, 20}) {
    polynomial.degree = degree;
    REQUIRE(InstantiateFamily(polynomial, &instance, &error));
    CHECK(instance.model->NumParameters() == degree + 1);
  }

  FamilyRequest peaks = Named("multi_gaussian");
  peaks.peaks = 3;
  REQUIRE(InstantiateFamily(peaks, &instance, &error));
  REQUIRE(instance.model->NumParameters() == 10);
  REQUIRE(instance.parameters.size() == 10);
  CHECK(instance.parameters[4].name == "center2");
  CHECK(instance.parameters[4].meaning.find("peak 2") != std::string::npos);
  CHECK(instance.parameters[8].name == "sigma3");
  CHECK(instance.parameters[8].default_lower == 0.0);
  CHECK(instance.parameters[9].name == "baseline");
  CHECK(instance.model->Symmetries().front().members.size() == 3);

  peaks.name = "multi_lorentzian";
  peaks.peaks = 20;
  REQUIRE(InstantiateFamily(peaks, &instance, &error));
  CHECK(instance.model->NumParameters() == 61);
  CHECK(instance.parameters[59].name == "hwhm20");
}

TEST_CASE("Catalogue: default bounds follow the family conventions", "[heuristics]") {
  struct Bound {
    std::string family;
    std::string parameter;
    double lower;
    double upper;
  };
  const std::vector<Bound> bounds = {
      {"gaussian", "sigma", 0, kInf},        {"lorentzian", "hwhm", 0, kInf},
      {"pseudo_voigt", "fwhm", 0, kInf},     {"pseudo_voigt", "eta", 0, 1},
      {"multi_gaussian", "sigma1", 0, kInf}, {"multi_lorentzian", "hwhm1", 0, kInf},
      {"exp_decay", "tau", 0, kInf},         {"biexp_decay", "tau1", 0, kInf},
      {"biexp_decay", "tau2", 0, kInf},      {"stretched_exp", "tau", 0, kInf},
      {"logistic4", "hill", -kInf, kInf},    {"logistic5", "hill", -kInf, kInf},
      {"logistic5", "asymmetry", 0, kInf},   {"michaelis_menten", "vmax", 0, kInf},
      {"michaelis_menten", "km", 0, kInf},   {"hill_binding", "kd", 0, kInf},
      {"sine", "frequency", 0, kInf},        {"sine", "phase", -kInf, kInf},
      {"damped_sine", "frequency", 0, kInf}, {"damped_sine", "tau", 0, kInf},
      {"damped_sine", "phase", -kInf, kInf}, {"arrhenius", "ea", 0, kInf},
      {"gaussian", "height", -kInf, kInf},   {"line", "slope", -kInf, kInf},
  };
  for (const Bound& b : bounds) {
    INFO(b.family << "." << b.parameter);
    const FamilyDescription* d = FindFamily(b.family);
    REQUIRE(d != nullptr);
    const FamilyParameter& p = ParameterNamed(*d, b.parameter);
    CHECK(p.default_lower == b.lower);
    CHECK(p.default_upper == b.upper);
  }
}

TEST_CASE("Catalogue: unknown names get a precise message and a suggestion", "[heuristics]") {
  CHECK(InstantiateError(Named("gausian")) ==
        "unknown family 'gausian' (did you mean 'gaussian'?)");
  CHECK(InstantiateError(Named("Gaussian")) ==
        "unknown family 'Gaussian' (did you mean 'gaussian'?)");
  CHECK(InstantiateError(Named("multi-lorentzian")) ==
        "unknown family 'multi-lorentzian' (did you mean 'multi_lorentzian'?)");
  CHECK(InstantiateError(Named("logistic_4")) ==
        "unknown family 'logistic_4' (did you mean 'logistic4'?)");
  CHECK(InstantiateError(Named("poly")) == "unknown family 'poly' (did you mean 'polynomial'?)");
  const std::string far = InstantiateError(Named("banana"));
  CHECK(far.rfind("unknown family 'banana': expected one of line, polynomial, gaussian", 0) == 0);
  CHECK(far.find("did you mean") == std::string::npos);
  CHECK(InstantiateError(Named("")).rfind("family: name is empty; expected one of line", 0) == 0);
  // A null error pointer is allowed.
  FamilyInstance instance;
  CHECK_FALSE(InstantiateFamily(Named("banana"), &instance, nullptr));
}

TEST_CASE("Catalogue: bad degree and peak options are refused with the field named",
          "[heuristics]") {
  FamilyRequest polynomial = Named("polynomial");
  polynomial.degree = 40;
  CHECK(InstantiateError(polynomial) == "degree = 40: must be between 0 and 20");
  polynomial.degree = -1;
  CHECK(InstantiateError(polynomial) == "degree = -1: must be between 0 and 20");

  FamilyRequest peaks = Named("multi_gaussian");
  peaks.peaks = 0;
  CHECK(InstantiateError(peaks) == "peaks = 0: must be between 1 and 20");
  peaks.peaks = 21;
  CHECK(InstantiateError(peaks) == "peaks = 21: must be between 1 and 20");
  peaks.auto_peaks = true;
  const std::string auto_error = InstantiateError(peaks);
  CHECK(auto_error.rfind("peaks = auto: family 'multi_gaussian' needs the data", 0) == 0);

  FamilyRequest gaussian = Named("gaussian");
  gaussian.peaks = 3;
  CHECK(InstantiateError(gaussian) ==
        "peaks = 3: family 'gaussian' takes no peaks option (only multi_gaussian and "
        "multi_lorentzian do)");
  gaussian.peaks = 1;
  gaussian.auto_peaks = true;
  CHECK(InstantiateError(gaussian).rfind("peaks = auto: family 'gaussian' takes no peaks", 0) == 0);
  FamilyRequest line = Named("line");
  line.degree = 5;
  CHECK(InstantiateError(line) ==
        "degree = 5: family 'line' takes no degree option (only polynomial does)");
}

TEST_CASE("Catalogue: docs/families.md documents every family and parameter", "[heuristics]") {
  std::ifstream file(std::string(FOOTHOLD_SOURCE_DIR) + "/docs/families.md");
  REQUIRE(file.good());
  std::stringstream buffer;
  buffer << file.rdbuf();
  const std::string docs = buffer.str();
  for (const FamilyDescription& d : FamilyCatalogue()) {
    INFO(d.name);
    const std::string heading = "## `" + d.name + "`";
    const size_t start = docs.find(heading);
    REQUIRE(start != std::string::npos);
    const size_t end = docs.find("\n## ", start + heading.size());
    const std::string section = docs.substr(start, end == std::string::npos ? end : end - start);
    for (const FamilyParameter& p : d.parameters) {
      INFO(p.name);
      CHECK(section.find("`" + Stem(p.name)) != std::string::npos);
    }
    CHECK(section.find("Guess") != std::string::npos);
    CHECK(section.find("Linear") != std::string::npos);
  }
}

}  // namespace
}  // namespace foothold
