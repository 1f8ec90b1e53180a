#pragma once
// What the NIST StRD tests share: the problem set loaded once, the pass marks of
// DESIGN.md §7, the one problem that cannot meet them in float64 (Lanczos1's standard
// deviations), and the checks of a scored fit against them. Data and certified values:
// NIST ITL, https://www.itl.nist.gov/div898/strd/nls/nls_main.shtml, stored unchanged in
// tests/data/nist-strd (README.md there for provenance, quirks and scoring).

#include <Eigen/Core>
#include <catch2/catch.hpp>
#include <cmath>
#include <memory>
#include <string>
#include <vector>

#include "engine/model/expression_model.h"
#include "engine/solve/problem.h"
#include "tests/certification/nist_strd.h"

namespace foothold {
namespace certification {

// A pass is this many correct significant digits on every parameter and on the RSS
// (DESIGN.md §7; the README's baseline counts problems with LRE >= 6).
constexpr double kCertifiedDigits = 6.0;
// Certified standard deviations: software studies treat about 4 digits as the least that is
// acceptable (tests/data/nist-strd/README.md, "Scoring a solver").
constexpr double kCertifiedSdDigits = 4.0;
// Lanczos1's certified RSS (1.43e-25) lies below what double precision resolves at those
// parameters (README.md, "Quirks"): the check there is that the RSS is tiny.
constexpr double kLanczos1RssCeiling = 1e-20;
// Lanczos1's standard deviations inherit the RSS's rounding (LoweredThresholds below).
constexpr double kLanczos1SdDigits = 2.5;

// The 27 problems of tests/data/nist-strd, loaded once per process; a load error fails the
// test that asked.
inline const std::vector<NistProblem>& NistProblems() {
  static const std::vector<NistProblem> problems = [] {
    std::vector<NistProblem> loaded;
    std::string error;
    if (!LoadNistProblems(FOOTHOLD_NIST_DIR, &loaded, &error)) {
      FAIL("NIST StRD: cannot load " << FOOTHOLD_NIST_DIR << ": " << error);
    }
    return loaded;
  }();
  return problems;
}

inline const NistProblem& FindNistProblem(const std::string& name) {
  for (const NistProblem& p : NistProblems()) {
    if (p.name == name) return p;
  }
  FAIL("NIST StRD: no problem " << name);
  return NistProblems().front();
}

// A NIST problem set up the way a user's own expression is: the model text parsed with the
// predictor columns and b1..bp, the response from its expression (log(y) for Nelson), no
// bounds.
struct NistFit {
  std::unique_ptr<ExpressionModel> model;
  Problem problem;  // problem.model is model.get()
};

// False with the parser's, the dataset's or the problem's message in *error.
inline bool SetUpNistFit(const NistProblem& p, NistFit* fit, std::string* error) {
  fit->model =
      ParseExpressionModel(p.model, p.predictors, p.ParameterNames(), ExpressionOptions{}, error);
  if (!fit->model) return false;
  fit->problem = Problem();
  fit->problem.model = fit->model.get();
  return BuildNistDataset(p, &fit->problem.data, error) && fit->problem.Validate(error);
}

// NIST's Start 1 or Start 2 as a vector.
inline Eigen::VectorXd NistStart(const NistProblem& p, int start_number) {
  const std::vector<double>& values = start_number == 1 ? p.start1 : p.start2;
  return Eigen::Map<const Eigen::VectorXd>(values.data(), values.size());
}

// The figures a fit is scored by: minimum log relative errors against the certified values.
struct NistScore {
  double rss = std::nan("");
  double min_param_lre = 0;
  double rss_lre = 0;
  double min_sd_lre = 0;
  // The standard deviations rescaled by sqrt(certified rss / rss): what remains when the
  // RSS's own rounding is taken out (used for Lanczos1).
  double min_sd_lre_at_certified_rss = 0;
};

// The thresholds a problem is held to; `why` says why one is lower than the pass mark.
struct NistThresholds {
  double min_param_lre = kCertifiedDigits;
  double rss_lre = kCertifiedDigits;
  double min_sd_lre = kCertifiedSdDigits;
  const char* why = nullptr;  // null when nothing is lowered
};

// Lanczos1 is the one problem whose figures fall short, from any start, as a float64 limit
// rather than a solver fault. Its certified standard deviations are
// sqrt(diag((J^T J)^-1) * rss / dof), so their relative error is half that of the RSS. The
// RSS (1.43e-25) is a sum of residuals of about 8e-14 on responses up to 2.5, where rounding
// of each value is about 4e-16: the RSS holds about 3 digits (measured RSS LRE 2.6 to 2.9 over
// solver and expression-evaluation revisions) and the standard deviations 2.9 to 3.2; the
// digits move with rounding noise, so the floor is 2.5. The parameters still reach 10.6, the
// RSS check (< 1e-20) holds, and the standard deviations rescaled to the certified RSS must
// still meet kCertifiedSdDigits. scipy's MINPACK (tests/reference/nist_scipy.py) reaches 3.3
// to 3.4 on the raw figure.
inline NistThresholds ThresholdsFor(const std::string& problem) {
  NistThresholds thresholds;
  if (problem == "Lanczos1") {
    thresholds.min_sd_lre = kLanczos1SdDigits;
    thresholds.why =
        "standard deviations limited to ~3 digits by the float64 resolution of RSS ~1e-25";
  }
  return thresholds;
}

// Every pass mark of DESIGN.md §7, Lanczos1's RSS by its ceiling instead of its LRE.
inline bool MeetsEveryPassMark(const std::string& problem, const NistScore& s) {
  const bool is_rss_met =
      problem == "Lanczos1" ? s.rss < kLanczos1RssCeiling : s.rss_lre >= kCertifiedDigits;
  return s.min_param_lre >= kCertifiedDigits && is_rss_met && s.min_sd_lre >= kCertifiedSdDigits;
}

// Checks a scored fit against ThresholdsFor(problem). A problem whose lowered thresholds are
// no longer needed fails too, so a shortfall cannot outlive its cause.
inline void CheckNistScore(const std::string& problem, const NistScore& s) {
  const NistThresholds thresholds = ThresholdsFor(problem);
  if (thresholds.why) WARN("NIST StRD " << problem << ": " << thresholds.why);
  CHECK(s.min_param_lre >= thresholds.min_param_lre);
  if (problem == "Lanczos1") {
    CHECK(s.rss < kLanczos1RssCeiling);
    INFO("standard deviations rescaled to the certified RSS: LRE "
         << s.min_sd_lre_at_certified_rss);
    CHECK(s.min_sd_lre_at_certified_rss >= kCertifiedSdDigits);
  } else {
    CHECK(s.rss_lre >= thresholds.rss_lre);
  }
  CHECK(s.min_sd_lre >= thresholds.min_sd_lre);
  if (thresholds.why) {
    INFO("the lowered thresholds are stale: every pass mark is met");
    CHECK_FALSE(MeetsEveryPassMark(problem, s));
  }
}

}  // namespace certification
}  // namespace foothold
