// GuessFamily and ResolveAutoPeaks: the properties every guess has, exact and known-answer
// guesses, degenerate data, bounds, and the choice of the peak count.

#include <catch2/catch.hpp>
#include <cmath>
#include <set>
#include <string>

#include "corpus/corpus.h"
#include "heuristics/guess.h"

namespace foothold {
namespace {

constexpr double kExactTolerance = 1e-9;
// Coefficients in powers of x near 1000 carry cancellation of about 1e6 between terms.
constexpr double kOffsetTolerance = 1e-8;
// Noise-free T_16 sampled at 400 points (sum of y^2 ~ 200): a least-squares fit of
// degree 16 leaves rounding only.
constexpr double kHighDegreeRss = 1e-12;
// FWHM = 2 sqrt(2 ln 2) sigma for a Gaussian (a textbook identity, value from memory).
constexpr double kFwhmPerSigma = 2.3548200450309493;
constexpr double kWidthTolerance = 0.1;       // relative, noise-free single peaks
constexpr double kFrequencyTolerance = 0.01;  // relative, noise-free sine

Dataset MakeData(const Eigen::VectorXd& x, const Eigen::VectorXd& y) {
  Dataset data;
  data.predictor_names = {"x"};
  data.predictors = x;
  data.response = y;
  return data;
}

Eigen::VectorXd Grid(int n, double lo, double hi) { return Eigen::VectorXd::LinSpaced(n, lo, hi); }

struct Guessed {
  bool ok = false;
  std::string error;
  GuessResult result;
};

Guessed Guess(const FamilyRequest& request, const Dataset& data,
              const Eigen::VectorXd& lower = Eigen::VectorXd(),
              const Eigen::VectorXd& upper = Eigen::VectorXd(),
              const GuessOptions& options = GuessOptions()) {
  Guessed out;
  FamilyInstance instance;
  if (!InstantiateFamily(request, &instance, &out.error)) return out;
  out.ok =
      GuessFamily(request, *instance.model, data, lower, upper, options, &out.result, &out.error);
  return out;
}

FamilyRequest Named(const std::string& name) {
  FamilyRequest request;
  request.name = name;
  return request;
}

bool HasWarning(const GuessResult& result, const std::string& part) {
  for (const std::string& warning : result.warnings) {
    if (warning.find(part) != std::string::npos) return true;
  }
  return false;
}

TEST_CASE("GuessFamily: candidates are finite, inside the bounds, named and ranked by rss",
          "[heuristics]") {
  const std::vector<corpus::CorpusCase> cases = corpus::GenerateCorpus(7, 3);
  for (const corpus::CorpusCase& c : cases) {
    INFO(c.label);
    GuessOptions options;
    options.max_candidates = 4;
    const Guessed g =
        Guess(c.request, MakeData(c.x, c.y), Eigen::VectorXd(), Eigen::VectorXd(), options);
    REQUIRE(g.ok);
    const GuessResult& r = g.result;
    const int p = static_cast<int>(c.truth.size());
    REQUIRE(!r.candidates.empty());
    CHECK(r.candidates.size() <= 4);
    REQUIRE(r.lower.size() == p);
    REQUIRE(r.upper.size() == p);
    REQUIRE(r.scale.size() == p);
    REQUIRE(r.log_scale.size() == static_cast<size_t>(p));
    std::set<std::string> names;
    for (size_t k = 0; k < r.candidates.size(); ++k) {
      const GuessCandidate& candidate = r.candidates[k];
      CHECK(names.insert(candidate.name).second);
      CHECK(candidate.parameters.allFinite());
      CHECK(std::isfinite(candidate.rss));
      CHECK((candidate.parameters.array() >= r.lower.array()).all());
      CHECK((candidate.parameters.array() <= r.upper.array()).all());
      if (k > 0) CHECK(r.candidates[k - 1].rss <= candidate.rss);
    }
    CHECK((r.scale.array() > 0).all());
    CHECK(r.scale.allFinite());
  }
}

TEST_CASE("GuessFamily: line and polynomial are solved exactly on noise-free data",
          "[heuristics]") {
  const Eigen::VectorXd x = Grid(30, -2e-6, 5e-6);
  const Eigen::VectorXd line_y = (3e5 * x).array() - 4.0;
  const Guessed line = Guess(Named("line"), MakeData(x, line_y));
  REQUIRE(line.ok);
  CHECK(line.result.candidates[0].parameters[0] == Approx(3e5).epsilon(kExactTolerance));
  CHECK(line.result.candidates[0].parameters[1] == Approx(-4.0).epsilon(kExactTolerance));

  FamilyRequest cubic = Named("polynomial");
  cubic.degree = 3;
  const Eigen::Vector4d c(1.0, -2e6, 3e11, 4e17);
  Eigen::VectorXd y = Eigen::VectorXd::Constant(x.size(), c[0]);
  for (int k = 1; k <= 3; ++k) y += c[k] * x.array().pow(k).matrix();
  const Guessed poly = Guess(cubic, MakeData(x, y));
  REQUIRE(poly.ok);
  for (int k = 0; k <= 3; ++k) {
    CHECK(poly.result.candidates[0].parameters[k] == Approx(c[k]).epsilon(1e-6));
  }
  // Two points determine a line exactly.
  const Guessed two = Guess(Named("line"), MakeData(Eigen::Vector2d(1, 3), Eigen::Vector2d(2, 6)));
  REQUIRE(two.ok);
  CHECK(two.result.candidates[0].parameters[0] == Approx(2.0).epsilon(kExactTolerance));
}

TEST_CASE("GuessFamily: polynomials on x far from 0 and of high degree are still exact",
          "[heuristics]") {
  // x in [1000, 1001]: in powers of x the columns are nearly parallel; centred they are not.
  const Eigen::VectorXd x = Grid(200, 1000.0, 1001.0);
  const Eigen::VectorXd u = x.array() - 1000.0;
  const Eigen::VectorXd y = (1.0 + 2.0 * u.array() + 3.0 * u.array().square()).matrix();
  FamilyRequest quadratic = Named("polynomial");
  quadratic.degree = 2;
  const Guessed guessed = Guess(quadratic, MakeData(x, y));
  REQUIRE(guessed.ok);
  // 1 + 2 (x - 1000) + 3 (x - 1000)^2 = 2998001 - 5998 x + 3 x^2.
  const Eigen::VectorXd& p = guessed.result.candidates[0].parameters;
  CHECK(p[0] == Approx(2998001.0).epsilon(kOffsetTolerance));
  CHECK(p[1] == Approx(-5998.0).epsilon(kOffsetTolerance));
  CHECK(p[2] == Approx(3.0).epsilon(kOffsetTolerance));

  // Degree 16: the normal equations' pivots fall below 1e-8 of the largest (1e-11 here, by
  // scipy.linalg.ldl of the Gram matrix), so pivoted QR solves instead.
  FamilyRequest high = Named("polynomial");
  high.degree = 16;
  const Eigen::VectorXd t = Grid(400, -1.0, 1.0);
  Eigen::VectorXd chebyshev = Eigen::VectorXd::Zero(t.size());
  for (Eigen::Index i = 0; i < t.size(); ++i) chebyshev[i] = std::cos(16.0 * std::acos(t[i]));
  const Guessed degree16 = Guess(high, MakeData(t, chebyshev));
  REQUIRE(degree16.ok);
  INFO("rss " << degree16.result.candidates[0].rss);
  CHECK(degree16.result.candidates[0].rss < kHighDegreeRss);
  // T_16 has leading coefficient 2^15 (Chebyshev polynomials, a textbook identity).
  CHECK(degree16.result.candidates[0].parameters[16] == Approx(32768.0).epsilon(1e-6));
}

TEST_CASE("GuessFamily: peak widths follow from the half-height width", "[heuristics]") {
  const Eigen::VectorXd x = Grid(401, 0, 10);
  const double sigma = 0.6, hwhm = 0.5;
  const Eigen::VectorXd gauss = 5.0 * (-(x.array() - 4.0).square() / (2 * sigma * sigma)).exp() + 1;
  const Guessed g = Guess(Named("gaussian"), MakeData(x, gauss));
  REQUIRE(g.ok);
  // The "peaks" candidate: sigma = FWHM / (2 sqrt(2 ln 2)).
  for (const GuessCandidate& candidate : g.result.candidates) {
    if (candidate.name != "peaks") continue;
    CHECK(candidate.parameters[1] == Approx(4.0).margin(0.02));
    CHECK(candidate.parameters[2] == Approx(sigma).epsilon(kWidthTolerance));
  }
  CHECK(2 * std::sqrt(2 * std::log(2.0)) == Approx(kFwhmPerSigma));
  const Eigen::VectorXd lorentz = 3.0 / (1.0 + ((x.array() - 6.0) / hwhm).square()) - 2;
  const Guessed l = Guess(Named("lorentzian"), MakeData(x, lorentz));
  REQUIRE(l.ok);
  CHECK(l.result.candidates[0].parameters[2] == Approx(hwhm).epsilon(kWidthTolerance));
  CHECK(l.result.candidates[0].parameters[3] == Approx(-2.0).margin(0.1));
}

TEST_CASE("GuessFamily: a dip is guessed with a negative height", "[heuristics]") {
  const Eigen::VectorXd x = Grid(200, 0, 1);
  const Eigen::VectorXd y = 10.0 - 4.0 * (-(x.array() - 0.3).square() / (2 * 0.05 * 0.05)).exp();
  const Guessed g = Guess(Named("gaussian"), MakeData(x, y));
  REQUIRE(g.ok);
  CHECK(g.result.candidates[0].parameters[0] == Approx(-4.0).epsilon(0.05));
  CHECK(g.result.candidates[0].parameters[1] == Approx(0.3).margin(0.01));
}

TEST_CASE("GuessFamily: the sine frequency comes from the periodogram", "[heuristics]") {
  corpus::Random random(3);
  Eigen::VectorXd x(300);
  for (int i = 0; i < x.size(); ++i) x[i] = random.Uniform(0, 2e-3);
  std::sort(x.data(), x.data() + x.size());
  const double f = 7.3e3;
  const Eigen::VectorXd y = (2 * corpus::kPi * f * x.array() + 0.4).sin() * 2.0 + 0.5;
  const Guessed g = Guess(Named("sine"), MakeData(x, y));
  REQUIRE(g.ok);
  CHECK(g.result.candidates[0].name.rfind("periodogram", 0) == 0);
  CHECK(g.result.candidates[0].parameters[1] == Approx(f).epsilon(kFrequencyTolerance));
}

TEST_CASE("GuessFamily: degenerate responses give a flagged guess, never NaN", "[heuristics]") {
  const Eigen::VectorXd x = Grid(50, 0, 1);
  for (const std::string& name : {"gaussian", "exp_decay", "logistic4", "sine", "gompertz",
                                  "multi_lorentzian", "hill_binding", "damped_sine"}) {
    INFO(name);
    FamilyRequest request = Named(name);
    if (name == "multi_lorentzian") request.peaks = 2;
    const Guessed constant = Guess(request, MakeData(x, Eigen::VectorXd::Constant(50, 3.5)));
    REQUIRE(constant.ok);
    CHECK(HasWarning(constant.result, "constant response"));
    CHECK(constant.result.candidates[0].parameters.allFinite());
    const Guessed zero = Guess(request, MakeData(x, Eigen::VectorXd::Zero(50)));
    REQUIRE(zero.ok);
    CHECK(HasWarning(zero.result, "every response is 0"));
    CHECK(zero.result.candidates[0].parameters.allFinite());
  }
  // A single spike: finite, with the width taken from the sampling.
  Eigen::VectorXd spike = Eigen::VectorXd::Zero(50);
  spike[20] = 7.0;
  const Guessed g = Guess(Named("gaussian"), MakeData(x, spike));
  REQUIRE(g.ok);
  CHECK(HasWarning(g.result, "single-point spike"));
  CHECK(g.result.candidates[0].parameters[1] == Approx(x[20]).margin(0.03));
  CHECK(g.result.candidates[0].parameters[2] > 0);
}

TEST_CASE("GuessFamily: data the family cannot take are refused with the count", "[heuristics]") {
  const Eigen::VectorXd x = Grid(40, -1, 2);  // 13 of 40 are <= 0
  const Eigen::VectorXd y = Eigen::VectorXd::LinSpaced(40, 1, 5);
  Guessed g = Guess(Named("power_law"), MakeData(x, y));
  CHECK_FALSE(g.ok);
  CHECK(g.error == "power_law needs x > 0: 14 of 40 distinct x are <= 0");
  g = Guess(Named("michaelis_menten"), MakeData(x, y));
  CHECK_FALSE(g.ok);
  CHECK(g.error.find("michaelis_menten needs x >= 0 (a concentration): 13 of 40") == 0);
  g = Guess(Named("arrhenius"), MakeData(x, y));
  CHECK_FALSE(g.ok);
  CHECK(g.error.find("arrhenius needs x > 0 (an absolute temperature in K)") == 0);
  g = Guess(Named("stretched_exp"), MakeData(x, y));
  CHECK_FALSE(g.ok);
  CHECK(g.error.find("stretched_exp needs x >= 0") == 0);
  // Too few points, and x without spread.
  g = Guess(Named("gaussian"), MakeData(Eigen::Vector2d(1, 2), Eigen::Vector2d(3, 4)));
  CHECK_FALSE(g.ok);
  CHECK(g.error == "gaussian needs at least 4 points with distinct x: got 2");
  g = Guess(Named("exp_decay"), MakeData(Eigen::VectorXd::Constant(10, 2.0), y.head(10)));
  CHECK_FALSE(g.ok);
  CHECK(g.error == "exp_decay: x: all 10 values equal 2; the family needs x to vary");
  // Options are validated.
  GuessOptions options;
  options.max_candidates = 0;
  g = Guess(Named("line"), MakeData(x, y), Eigen::VectorXd(), Eigen::VectorXd(), options);
  CHECK_FALSE(g.ok);
  CHECK(g.error == "guess options: max_candidates = 0: must be >= 1");
}

TEST_CASE("GuessFamily: negative values where the family needs positive ones are flagged",
          "[heuristics]") {
  const Eigen::VectorXd t = Grid(30, 300, 600);
  Eigen::VectorXd k = (-5000.0 / t.array()).exp() * 1e6;
  k[3] = -0.5;
  k[10] = 0.0;
  const Guessed a = Guess(Named("arrhenius"), MakeData(t, k));
  REQUIRE(a.ok);
  CHECK(HasWarning(a.result, "arrhenius: 2 of 30 rates are <= 0"));
  CHECK(a.result.candidates[0].parameters.allFinite());

  const Eigen::VectorXd x = Grid(30, 1, 10);
  Eigen::VectorXd y = 2.0 * x.array().pow(1.5);
  y[0] = -1;
  const Guessed p = Guess(Named("power_law"), MakeData(x, y));
  REQUIRE(p.ok);
  CHECK(HasWarning(p.result, "power_law: y changes sign (1 of 30"));
  CHECK(p.result.candidates[0].parameters[1] == Approx(1.5).margin(0.1));

  const Eigen::VectorXd negative = -(x.array() / (2.0 + x.array())).matrix();
  const Guessed m = Guess(Named("michaelis_menten"), MakeData(x, negative));
  REQUIRE(m.ok);
  CHECK(HasWarning(m.result, "responses are negative"));
  CHECK(m.result.candidates[0].parameters.allFinite());
}

TEST_CASE("GuessFamily: request bounds are intersected with the defaults and respected",
          "[heuristics]") {
  const Eigen::VectorXd x = Grid(100, 0, 1);
  const Eigen::VectorXd y = 2.0 * (-(x.array() - 0.5).square() / (2 * 0.05 * 0.05)).exp();
  const double inf = std::numeric_limits<double>::infinity();
  const Eigen::Vector4d lower(-inf, 0.7, -inf, -inf), upper(inf, 0.8, inf, inf);
  const Guessed g = Guess(Named("gaussian"), MakeData(x, y), lower, upper);
  REQUIRE(g.ok);
  CHECK(g.result.lower[1] == 0.7);
  CHECK(g.result.lower[2] == 0.0);  // the family's sigma >= 0
  CHECK(HasWarning(g.result, "moved inside"));
  for (const GuessCandidate& candidate : g.result.candidates) {
    CHECK(candidate.parameters[1] >= 0.7);
    CHECK(candidate.parameters[1] <= 0.8);
  }
  const Eigen::Vector4d empty_upper(inf, inf, -1.0, inf);
  const Guessed empty = Guess(Named("gaussian"), MakeData(x, y), Eigen::VectorXd(), empty_upper);
  CHECK_FALSE(empty.ok);
  CHECK(empty.error.find("bounds.sigma: [0, -1] is empty") == 0);
}

TEST_CASE("GuessFamily: missing peaks are filled when fewer are visible", "[heuristics]") {
  const Eigen::VectorXd x = Grid(300, 0, 10);
  const Eigen::VectorXd y =
      4.0 * (-(x.array() - 3).square() / 0.5).exp() + 3.0 * (-(x.array() - 7).square() / 0.5).exp();
  FamilyRequest request = Named("multi_gaussian");
  request.peaks = 3;
  const Guessed g = Guess(request, MakeData(x, y));
  REQUIRE(g.ok);
  REQUIRE(g.result.candidates[0].parameters.size() == 10);
  CHECK(g.result.candidates[0].parameters.allFinite());
  CHECK((g.result.candidates[0].parameters(Eigen::seq(2, 8, 3)).array() > 0).all());
}

TEST_CASE("ResolveAutoPeaks: the peak count with the lowest AICc", "[heuristics]") {
  corpus::Random random(11);
  const Eigen::VectorXd x = Grid(400, 0, 10);
  Eigen::VectorXd y(400);
  for (int i = 0; i < 400; ++i) {
    const double t = x[i];
    y[i] = 5 * std::exp(-std::pow(t - 2, 2) / 0.3) + 3 * std::exp(-std::pow(t - 5, 2) / 0.2) +
           4 * std::exp(-std::pow(t - 8, 2) / 0.4) + 0.5 + 0.05 * random.Normal();
  }
  FamilyRequest request = Named("multi_gaussian");
  request.auto_peaks = true;
  std::string error;
  REQUIRE(ResolveAutoPeaks(MakeData(x, y), &request, &error));
  CHECK(request.peaks == 3);
  CHECK_FALSE(request.auto_peaks);

  FamilyRequest wrong = Named("gaussian");
  wrong.auto_peaks = true;
  CHECK_FALSE(ResolveAutoPeaks(MakeData(x, y), &wrong, &error));
  CHECK(error.find("peaks = auto: family 'gaussian' has no peak count") == 0);
  FamilyRequest few = Named("multi_lorentzian");
  few.auto_peaks = true;
  CHECK_FALSE(ResolveAutoPeaks(MakeData(x.head(6), y.head(6)), &few, &error));
  CHECK(error.find("too few to compare") != std::string::npos);
}

}  // namespace
}  // namespace foothold
