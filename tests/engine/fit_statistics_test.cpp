#include "engine/stats/fit_statistics.h"

#include <unistd.h>

#include <catch2/catch.hpp>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <functional>
#include <memory>
#include <regex>
#include <sstream>
#include <string>
#include <vector>

#include "tests/engine/test_models.h"

namespace foothold {
namespace {

// Closed forms agree to rounding; the SVD path loses at most a few ulps per operation.
constexpr double kClosedFormTolerance = 1e-10;
// NIST certifies 11 digits and software studies accept LRE >= 4. At the certified values
// we measure 10.3 to 12.7 digits for the standard deviations, so we hold 8.
constexpr double kMinCertifiedLre = 8;
// scipy's covariance comes from its own QR of the same analytic Jacobian at its optimum;
// we measure agreement better than 1e-12 relative.
constexpr double kScipyTolerance = 1e-10;

// The models below are written out by hand: value and analytic gradient per point.
using testing::PointwiseModel;

PointwiseModel LineModel() {
  return PointwiseModel(
      {"slope", "intercept"}, [](double x, const double* b) { return b[0] * x + b[1]; },
      [](double x, const double*, double* g) {
        g[0] = x;
        g[1] = 1;
      });
}

Problem MakeProblem(const Model& model, const std::vector<double>& x, const std::vector<double>& y,
                    const std::vector<double>& sigma = {}) {
  Problem problem;
  problem.model = &model;
  problem.data.predictor_names = {"x"};
  problem.data.predictors = Eigen::Map<const Eigen::VectorXd>(x.data(), x.size());
  problem.data.response = Eigen::Map<const Eigen::VectorXd>(y.data(), y.size());
  if (!sigma.empty())
    problem.data.sigma = Eigen::Map<const Eigen::VectorXd>(sigma.data(), sigma.size());
  return problem;
}

// Ordinary least-squares line by the normal equations, for reference.
struct OlsLine {
  double slope, intercept, s, sxx, xbar;
};
OlsLine FitOlsLine(const std::vector<double>& x, const std::vector<double>& y) {
  const double n = x.size();
  double xbar = 0, ybar = 0;
  for (size_t i = 0; i < x.size(); ++i) {
    xbar += x[i] / n;
    ybar += y[i] / n;
  }
  double sxx = 0, sxy = 0;
  for (size_t i = 0; i < x.size(); ++i) {
    sxx += (x[i] - xbar) * (x[i] - xbar);
    sxy += (x[i] - xbar) * (y[i] - ybar);
  }
  const double slope = sxy / sxx;
  const double intercept = ybar - slope * xbar;
  double rss = 0;
  for (size_t i = 0; i < x.size(); ++i) rss += std::pow(y[i] - slope * x[i] - intercept, 2);
  return {slope, intercept, std::sqrt(rss / (n - 2)), sxx, xbar};
}

const std::vector<double> kLineX = {1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12};
const std::vector<double> kLineY = {2.1,  3.9,  6.2,  7.8,  10.1, 12.2,
                                    13.8, 16.1, 18.3, 19.7, 22.4, 23.9};

double Lre(double estimate, double certified) {
  return -std::log10(std::abs(estimate - certified) / std::abs(certified));
}

// Reads a NIST StRD .dat file: the header line "Data (lines A to B)" gives the 1-based
// range of the data rows, each "y x".
void ReadNist(const std::string& name, std::vector<double>* x, std::vector<double>* y) {
  std::ifstream file(std::string(FOOTHOLD_NIST_DIR) + "/" + name + ".dat");
  REQUIRE(file.good());
  std::vector<std::string> lines;
  for (std::string line; std::getline(file, line);) lines.push_back(line);
  const std::regex range(R"(Data\s+\(lines\s+(\d+)\s+to\s+(\d+)\))");
  std::smatch match;
  int first = 0, last = -1;
  for (size_t k = 0; k < 10 && k < lines.size(); ++k) {
    if (std::regex_search(lines[k], match, range)) {
      first = std::stoi(match[1]);
      last = std::stoi(match[2]);
    }
  }
  REQUIRE(first > 0);
  for (int k = first; k <= last; ++k) {
    std::istringstream row(lines[k - 1]);
    double yi = 0, xi = 0;
    REQUIRE(static_cast<bool>(row >> yi >> xi));
    y->push_back(yi);
    x->push_back(xi);
  }
}

struct NistCase {
  std::string name;
  PointwiseModel model;
  std::vector<double> certified, certified_sd;
  double certified_rss, certified_rsd;
  int dof;
};

// Certified values copied from the files' "Certified Values" blocks (NIST StRD).
std::vector<NistCase> NistCases() {
  std::vector<NistCase> cases;
  cases.push_back(
      {"Misra1a",
       PointwiseModel(
           {"b1", "b2"}, [](double x, const double* b) { return b[0] * (1 - std::exp(-b[1] * x)); },
           [](double x, const double* b, double* g) {
             g[0] = 1 - std::exp(-b[1] * x);
             g[1] = b[0] * x * std::exp(-b[1] * x);
           }),
       {2.3894212918E+02, 5.5015643181E-04},
       {2.7070075241E+00, 7.2668688436E-06},
       1.2455138894E-01,
       1.0187876330E-01,
       12});
  cases.push_back(
      {"DanWood",
       PointwiseModel(
           {"b1", "b2"}, [](double x, const double* b) { return b[0] * std::pow(x, b[1]); },
           [](double x, const double* b, double* g) {
             g[0] = std::pow(x, b[1]);
             g[1] = b[0] * std::pow(x, b[1]) * std::log(x);
           }),
       {7.6886226176E-01, 3.8604055871E+00},
       {1.8281973860E-02, 5.1726610913E-02},
       4.3173084083E-03,
       3.2853114039E-02,
       4});
  cases.push_back(
      {"Chwirut2",
       PointwiseModel(
           {"b1", "b2", "b3"},
           [](double x, const double* b) { return std::exp(-b[0] * x) / (b[1] + b[2] * x); },
           [](double x, const double* b, double* g) {
             const double e = std::exp(-b[0] * x), d = b[1] + b[2] * x;
             g[0] = -x * e / d;
             g[1] = -e / (d * d);
             g[2] = -x * e / (d * d);
           }),
       {1.6657666537E-01, 5.1653291286E-03, 1.2150007096E-02},
       {3.8303286810E-02, 6.6621605126E-04, 1.5304234767E-03},
       5.1304802941E+02,
       3.1717133040E+00,
       51});
  // Bennett5 is of NIST's higher difficulty: the column-scaled Jacobian has condition
  // number 5.7e4 and corr(b1, b2) = -0.99995 at the certified values (measured).
  cases.push_back(
      {"Bennett5",
       PointwiseModel(
           {"b1", "b2", "b3"},
           [](double x, const double* b) { return b[0] * std::pow(b[1] + x, -1 / b[2]); },
           [](double x, const double* b, double* g) {
             const double u = b[1] + x, power = std::pow(u, -1 / b[2]);
             g[0] = power;
             g[1] = -b[0] / b[2] * power / u;
             g[2] = b[0] * power * std::log(u) / (b[2] * b[2]);
           }),
       {-2.5235058043E+03, 4.6736564644E+01, 9.3218483193E-01},
       {2.9715175411E+02, 1.2448871856E+00, 2.0272299378E-02},
       5.2404744073E-04,
       1.8629312528E-03,
       151});
  return cases;
}

}  // namespace

TEST_CASE("FitStatistics: straight line matches the closed-form OLS standard errors", "[engine]") {
  // Textbook simple regression: se(slope) = s / sqrt(Sxx), se(intercept) =
  // s * sqrt(1/n + xbar^2 / Sxx), s^2 = rss / (n - 2).
  const PointwiseModel model = LineModel();
  const OlsLine ols = FitOlsLine(kLineX, kLineY);
  const FitStatistics stats = ComputeFitStatistics(MakeProblem(model, kLineX, kLineY),
                                                   Eigen::Vector2d(ols.slope, ols.intercept));
  const double n = kLineX.size();
  REQUIRE(stats.is_finite);
  CHECK(stats.dof == 10);
  CHECK(stats.rank == 2);
  CHECK_FALSE(stats.is_rank_deficient);
  CHECK(stats.unidentifiable.empty());
  CHECK(stats.standard_errors[0] ==
        Approx(ols.s / std::sqrt(ols.sxx)).epsilon(kClosedFormTolerance));
  CHECK(stats.standard_errors[1] == Approx(ols.s * std::sqrt(1 / n + ols.xbar * ols.xbar / ols.sxx))
                                        .epsilon(kClosedFormTolerance));
  // corr(slope, intercept) = -xbar / sqrt(mean of x^2) for simple regression.
  const double mean_x2 = ols.sxx / n + ols.xbar * ols.xbar;
  CHECK(stats.correlation(0, 1) ==
        Approx(-ols.xbar / std::sqrt(mean_x2)).epsilon(kClosedFormTolerance));
  CHECK(stats.covariance_scale == Approx(ols.s * ols.s).epsilon(kClosedFormTolerance));
  CHECK(stats.reduced_chi2 == Approx(ols.s * ols.s).epsilon(kClosedFormTolerance));
}

TEST_CASE("FitStatistics: t quantile for dof 10 at 95% and the interval it gives", "[engine]") {
  // 2.228138852 is t_{0.975, 10} from the standard t table (from memory).
  const PointwiseModel model = LineModel();
  const OlsLine ols = FitOlsLine(kLineX, kLineY);
  const Eigen::Vector2d params(ols.slope, ols.intercept);
  const FitStatistics stats = ComputeFitStatistics(MakeProblem(model, kLineX, kLineY), params);
  CHECK(stats.t_quantile == Approx(2.228138852).epsilon(1e-9));
  CHECK(stats.ci_high[0] - params[0] == Approx(stats.t_quantile * stats.standard_errors[0]));
  CHECK(params[0] - stats.ci_low[0] == Approx(stats.t_quantile * stats.standard_errors[0]));
}

TEST_CASE("FitStatistics: parameter units do not change the rank or the condition number",
          "[engine]") {
  // f = (1e8 b1) x + 1e-8 b2 is the line in other units. Unscaled, J^T J would have a
  // condition number near 1e32 and look singular; after unit column norms it is the line's.
  const double kUnit = 1e8;
  const PointwiseModel model(
      {"b1", "b2"}, [=](double x, const double* b) { return kUnit * b[0] * x + b[1] / kUnit; },
      [=](double x, const double*, double* g) {
        g[0] = kUnit * x;
        g[1] = 1 / kUnit;
      });
  const PointwiseModel line = LineModel();
  const OlsLine ols = FitOlsLine(kLineX, kLineY);
  const FitStatistics scaled =
      ComputeFitStatistics(MakeProblem(model, kLineX, kLineY),
                           Eigen::Vector2d(ols.slope / kUnit, ols.intercept * kUnit));
  const FitStatistics plain = ComputeFitStatistics(MakeProblem(line, kLineX, kLineY),
                                                   Eigen::Vector2d(ols.slope, ols.intercept));
  CHECK(scaled.rank == 2);
  CHECK_FALSE(scaled.is_rank_deficient);
  CHECK(scaled.condition_number == Approx(plain.condition_number).epsilon(kClosedFormTolerance));
  CHECK(scaled.standard_errors[0] * kUnit ==
        Approx(plain.standard_errors[0]).epsilon(kClosedFormTolerance));
  CHECK(scaled.standard_errors[1] / kUnit ==
        Approx(plain.standard_errors[1]).epsilon(kClosedFormTolerance));
}

TEST_CASE("FitStatistics: NIST StRD certified standard deviations at the certified values",
          "[engine]") {
  for (NistCase& nist : NistCases()) {
    std::vector<double> x, y;
    ReadNist(nist.name, &x, &y);
    const Eigen::VectorXd params =
        Eigen::Map<const Eigen::VectorXd>(nist.certified.data(), nist.certified.size());
    const FitStatistics stats = ComputeFitStatistics(MakeProblem(nist.model, x, y), params);
    INFO(nist.name);
    REQUIRE(stats.is_finite);
    CHECK(stats.dof == nist.dof);
    CHECK(Lre(stats.rss, nist.certified_rss) >= kMinCertifiedLre);
    CHECK(Lre(std::sqrt(stats.reduced_chi2), nist.certified_rsd) >= kMinCertifiedLre);
    for (size_t j = 0; j < nist.certified.size(); ++j) {
      INFO("b" << j + 1 << " LRE " << Lre(stats.standard_errors[j], nist.certified_sd[j]));
      CHECK(Lre(stats.standard_errors[j], nist.certified_sd[j]) >= kMinCertifiedLre);
    }
  }
}

// Reference: Debian python3-scipy, scipy.optimize.curve_fit (MINPACK lmder) with
// absolute_sigma=True and False, scipy.stats.t.ppf, and numpy (linalg.cond, R2 and
// Durbin-Watson written out) at scipy's optimum. Fails, never skips, when
// /usr/bin/python3 cannot import scipy.
constexpr const char* kScipyScript = R"(
import sys
import numpy as np
from scipy import stats
from scipy.optimize import curve_fit
d = np.loadtxt(sys.argv[1], delimiter=',')
x, y, s = d[:, 0], d[:, 1], d[:, 2]
def f(x, a, tau, b):
    return a * np.exp(-x / tau) + b
def jac(x, a, tau, b):
    e = np.exp(-x / tau)
    return np.column_stack([e, a * x * e / tau**2, np.ones_like(x)])
for absolute in (True, False):
    p, c = curve_fit(f, x, y, p0=[4, 2, 0.5], sigma=s, absolute_sigma=absolute, jac=jac,
                     method='lm', ftol=1e-15, xtol=1e-15, gtol=1e-15, maxfev=10000)
    se = np.sqrt(np.diag(c))
    print(*[repr(v) for v in list(p) + list(se) + [c[0, 1] / (se[0] * se[1])]])
print(repr(stats.t.ppf(0.975, len(x) - 3)))
# At the last optimum: condition number of the column-scaled weighted Jacobian, weighted R2
# about the weighted mean, Durbin-Watson of the weighted residuals (x is increasing).
jw = jac(x, *p) / s[:, None]
r = (f(x, *p) - y) / s
w = 1 / s**2
ybar = np.sum(w * y) / np.sum(w)
print(repr(np.linalg.cond(jw / np.linalg.norm(jw, axis=0))),
      repr(1 - np.sum(r**2) / np.sum(w * (y - ybar)**2)),
      repr(np.sum(np.diff(r)**2) / np.sum(r**2)))
)";

TEST_CASE("FitStatistics: weighted fit statistics match scipy curve_fit and numpy", "[engine]") {
  const PointwiseModel model(
      {"amplitude", "tau", "baseline"},
      [](double x, const double* b) { return b[0] * std::exp(-x / b[1]) + b[2]; },
      [](double x, const double* b, double* g) {
        const double e = std::exp(-x / b[1]);
        g[0] = e;
        g[1] = b[0] * x * e / (b[1] * b[1]);
        g[2] = 1;
      });
  // Deterministic data: 5 exp(-x/2.5) + 0.4 plus a fixed oscillating error of about sigma.
  std::vector<double> x, y, sigma;
  for (int i = 0; i < 30; ++i) {
    x.push_back(0.25 * i);
    const double truth = 5 * std::exp(-x.back() / 2.5) + 0.4;
    sigma.push_back(0.05 + 0.02 * truth);
    y.push_back(truth + 1.5 * sigma.back() * std::sin(7.3 * i + 0.5));
  }
  const std::filesystem::path dir = std::filesystem::temp_directory_path();
  const std::string tag = std::to_string(static_cast<long>(::getpid()));
  const std::filesystem::path data_path = dir / ("foothold_stats_" + tag + ".csv");
  const std::filesystem::path script_path = dir / ("foothold_stats_" + tag + ".py");
  {
    std::ofstream data(data_path);
    data.precision(17);
    for (size_t i = 0; i < x.size(); ++i) data << x[i] << ',' << y[i] << ',' << sigma[i] << '\n';
    std::ofstream(script_path) << kScipyScript;
  }
  const std::string command =
      "/usr/bin/python3 " + script_path.string() + " " + data_path.string() + " 2>&1";
  std::string output;
  FILE* pipe = ::popen(command.c_str(), "r");
  REQUIRE(pipe != nullptr);
  char buffer[512];
  while (std::fgets(buffer, sizeof buffer, pipe) != nullptr) output += buffer;
  const int status = ::pclose(pipe);
  std::filesystem::remove(data_path);
  std::filesystem::remove(script_path);
  INFO("scipy output: " << output);
  REQUIRE(status == 0);

  std::istringstream lines(output);
  Problem problem = MakeProblem(model, x, y, sigma);
  FitStatistics last;
  for (SigmaMode mode : {SigmaMode::kAbsolute, SigmaMode::kRelative}) {
    Eigen::Vector3d params, se;
    double correlation = 0;
    REQUIRE(static_cast<bool>(lines >> params[0] >> params[1] >> params[2] >> se[0] >> se[1] >>
                              se[2] >> correlation));
    problem.sigma_mode = mode;
    const FitStatistics stats = ComputeFitStatistics(problem, params);
    last = stats;
    INFO("sigma mode " << ToString(mode));
    for (int j = 0; j < 3; ++j) {
      CHECK(stats.standard_errors[j] == Approx(se[j]).epsilon(kScipyTolerance));
    }
    CHECK(stats.correlation(0, 1) == Approx(correlation).epsilon(kScipyTolerance));
  }
  double t_ppf = 0, condition_number = 0, r2 = 0, durbin_watson = 0;
  REQUIRE(static_cast<bool>(lines >> t_ppf >> condition_number >> r2 >> durbin_watson));
  CHECK(last.t_quantile == Approx(t_ppf).epsilon(kScipyTolerance));
  CHECK(last.condition_number == Approx(condition_number).epsilon(kScipyTolerance));
  CHECK(last.r2 == Approx(r2).epsilon(kScipyTolerance));
  CHECK(last.durbin_watson == Approx(durbin_watson).epsilon(kScipyTolerance));
}

TEST_CASE("FitStatistics: absolute sigma uses scale 1 and the normal quantile", "[engine]") {
  // Weighted straight line (Numerical Recipes 15.2, from memory): S = sum w, Sx = sum w x,
  // Sxx = sum w x^2, D = S Sxx - Sx^2, var(intercept) = Sxx / D, var(slope) = S / D.
  const PointwiseModel model = LineModel();
  std::vector<double> sigma;
  double s = 0, sx = 0, sxx = 0;
  for (double xi : kLineX) {
    sigma.push_back(0.1 + 0.05 * xi);
    const double w = 1 / (sigma.back() * sigma.back());
    s += w;
    sx += w * xi;
    sxx += w * xi * xi;
  }
  const double d = s * sxx - sx * sx;
  Problem problem = MakeProblem(model, kLineX, kLineY, sigma);
  const Eigen::Vector2d params(1.98, 0.1);
  const FitStatistics absolute = ComputeFitStatistics(problem, params);
  CHECK(absolute.covariance_scale == 1);
  CHECK(absolute.standard_errors[0] == Approx(std::sqrt(s / d)).epsilon(kClosedFormTolerance));
  CHECK(absolute.standard_errors[1] == Approx(std::sqrt(sxx / d)).epsilon(kClosedFormTolerance));
  // 1.959963985 is the standard normal 97.5% quantile (from memory).
  CHECK(absolute.t_quantile == Approx(1.959963985).epsilon(1e-9));

  problem.sigma_mode = SigmaMode::kRelative;
  const FitStatistics relative = ComputeFitStatistics(problem, params);
  CHECK(relative.covariance_scale == Approx(relative.reduced_chi2));
  CHECK(relative.standard_errors[0] ==
        Approx(absolute.standard_errors[0] * std::sqrt(relative.reduced_chi2)));
  CHECK(relative.t_quantile == Approx(2.228138852).epsilon(1e-9));
  CHECK(relative.rss == absolute.rss);
}

TEST_CASE("FitStatistics: (a+b)*x is rank 1 with both parameters unidentifiable", "[engine]") {
  const PointwiseModel model(
      {"a", "b"}, [](double x, const double* b) { return (b[0] + b[1]) * x; },
      [](double x, const double*, double* g) { g[0] = g[1] = x; });
  const FitStatistics stats =
      ComputeFitStatistics(MakeProblem(model, kLineX, kLineY), Eigen::Vector2d(1.0, 1.0));
  CHECK(stats.rank == 1);
  CHECK(stats.is_rank_deficient);
  CHECK(stats.unidentifiable == std::vector<int>{0, 1});
  CHECK(std::isnan(stats.standard_errors[0]));
  CHECK(std::isnan(stats.standard_errors[1]));
  CHECK(std::isnan(stats.ci_low[0]));
  CHECK(std::isnan(stats.correlation(0, 1)));
  CHECK(std::isinf(stats.condition_number));
  CHECK(stats.identifiable_condition_number == Approx(1.0));
  CHECK(stats.message.find("a, b are not identifiable") != std::string::npos);
}

TEST_CASE("FitStatistics: an identifiable parameter beside a null direction keeps its error",
          "[engine]") {
  // (a+b)*x + c is a line with slope a+b, so se(c) is the OLS intercept error, except that
  // dof counts free parameters (n - 3, not n - rank = n - 2): the variance estimate is
  // rss / (n - 3), larger by (n - 2) / (n - 3).
  const PointwiseModel model(
      {"a", "b", "c"}, [](double x, const double* b) { return (b[0] + b[1]) * x + b[2]; },
      [](double x, const double*, double* g) {
        g[0] = g[1] = x;
        g[2] = 1;
      });
  const OlsLine ols = FitOlsLine(kLineX, kLineY);
  const double n = kLineX.size();
  const FitStatistics stats =
      ComputeFitStatistics(MakeProblem(model, kLineX, kLineY),
                           Eigen::Vector3d(0.5 * ols.slope, 0.5 * ols.slope, ols.intercept));
  CHECK(stats.rank == 2);
  CHECK(stats.unidentifiable == std::vector<int>{0, 1});
  CHECK(stats.dof == 9);
  const double dof_ratio = std::sqrt((n - 2) / (n - 3));
  CHECK(stats.standard_errors[2] ==
        Approx(dof_ratio * ols.s * std::sqrt(1 / n + ols.xbar * ols.xbar / ols.sxx))
            .epsilon(kClosedFormTolerance));
  CHECK(stats.correlation(2, 2) == 1);
}

TEST_CASE("FitStatistics: a parameter the model ignores is the only unidentifiable one",
          "[engine]") {
  // Its Jacobian column is zero: an exact null direction e_b, orthogonal to the slope.
  const PointwiseModel model(
      {"slope", "b"}, [](double x, const double* b) { return b[0] * x; },
      [](double x, const double*, double* g) {
        g[0] = x;
        g[1] = 0;
      });
  const FitStatistics stats =
      ComputeFitStatistics(MakeProblem(model, kLineX, kLineY), Eigen::Vector2d(2.0, 7.0));
  CHECK(stats.rank == 1);
  CHECK(stats.unidentifiable == std::vector<int>{1});
  CHECK(std::isfinite(stats.standard_errors[0]));
  CHECK(std::isnan(stats.standard_errors[1]));
  CHECK(stats.message.find("b is not identifiable") != std::string::npos);
}

TEST_CASE("FitStatistics: a fixed parameter has zero rows and a point interval", "[engine]") {
  // With the intercept fixed at q, slope = sum x (y - q) / sum x^2 and
  // se(slope) = s / sqrt(sum x^2), s^2 = rss / (n - 1): regression through a fixed point.
  const PointwiseModel model = LineModel();
  Problem problem = MakeProblem(model, kLineX, kLineY);
  problem.is_fixed = {false, true};
  const double q = 0.5;
  double sx2 = 0, sxy = 0;
  for (size_t i = 0; i < kLineX.size(); ++i) {
    sx2 += kLineX[i] * kLineX[i];
    sxy += kLineX[i] * (kLineY[i] - q);
  }
  const double slope = sxy / sx2;
  double rss = 0;
  for (size_t i = 0; i < kLineX.size(); ++i) rss += std::pow(kLineY[i] - slope * kLineX[i] - q, 2);
  const FitStatistics stats = ComputeFitStatistics(problem, Eigen::Vector2d(slope, q));
  CHECK(stats.num_free == 1);
  CHECK(stats.dof == 11);
  CHECK(stats.standard_errors[1] == 0);
  CHECK(stats.ci_low[1] == q);
  CHECK(stats.ci_high[1] == q);
  CHECK(stats.covariance.row(1).isZero(0));
  CHECK(stats.covariance.col(1).isZero(0));
  CHECK(stats.correlation.row(1).isZero(0));
  CHECK(stats.correlation(0, 0) == 1);
  CHECK(
      stats.standard_errors[0] ==
      Approx(std::sqrt(rss / (kLineX.size() - 1)) / std::sqrt(sx2)).epsilon(kClosedFormTolerance));
}

TEST_CASE("FitStatistics: Durbin-Watson and runs on a hand-worked sequence in x order",
          "[engine]") {
  // A constant model with its only parameter fixed at 0: the weighted residuals are -y,
  // and both statistics are unchanged by a sign flip. Rows are given out of x order, with
  // a tie at x = 4 that a stable sort keeps in data order.
  //   x order: x = 1 2 3 4 4 5, e = 1 2 0 -1 -2 1
  //   DW: differences 1, -2, -1, -1, 3 -> 1 + 4 + 1 + 1 + 9 = 16; sum e^2 = 11; DW = 16/11.
  //   (The tie reversed would give differences 1, -2, -2, 1, 2 -> 14/11.)
  //   Runs (zero skipped): + + | - - | + -> 3 runs, n1 = 3, n2 = 2.
  //   E[R] = 2*3*2/5 + 1 = 3.4; Var[R] = 12 (12 - 5) / (25 * 4) = 0.84;
  //   z = (3 - 3.4) / sqrt(0.84) = -0.4364357805; p = erfc(|z| / sqrt 2) = 0.6625205835.
  const PointwiseModel model(
      {"c"}, [](double, const double* b) { return b[0]; },
      [](double, const double*, double* g) { g[0] = 1; });
  Problem problem = MakeProblem(model, {3, 1, 4, 5, 2, 4}, {0, 1, -1, 1, 2, -2});
  problem.is_fixed = {true};
  const FitStatistics stats = ComputeFitStatistics(problem, Eigen::VectorXd::Zero(1));
  CHECK(stats.durbin_watson == Approx(16.0 / 11.0));
  CHECK(stats.num_runs == 3);
  CHECK(stats.runs_z == Approx(-0.4364357805));
  CHECK(stats.runs_p_value == Approx(0.6625205835));

  SECTION("alternating signs: too many runs") {
    // n1 = n2 = 5, 10 runs; E[R] = 6, Var[R] = 50 * 40 / (100 * 9) = 20/9;
    // z = 4 / sqrt(20/9) = 2.6832815730, p = 0.0072903581.
    Problem alternating =
        MakeProblem(model, {1, 2, 3, 4, 5, 6, 7, 8, 9, 10}, {1, -1, 1, -1, 1, -1, 1, -1, 1, -1});
    alternating.is_fixed = {true};
    const FitStatistics alt = ComputeFitStatistics(alternating, Eigen::VectorXd::Zero(1));
    CHECK(alt.num_runs == 10);
    CHECK(alt.runs_z == Approx(2.6832815730));
    CHECK(alt.runs_p_value == Approx(0.0072903581));
    // DW: nine differences of +-2 -> 36 over sum e^2 = 10.
    CHECK(alt.durbin_watson == Approx(3.6));
  }
  SECTION("one sign only: the runs test is undefined") {
    Problem positive = MakeProblem(model, {1, 2, 3}, {1, 2, 3});
    positive.is_fixed = {true};
    const FitStatistics one = ComputeFitStatistics(positive, Eigen::VectorXd::Zero(1));
    CHECK(one.num_runs == 1);
    CHECK(std::isnan(one.runs_z));
    CHECK(std::isnan(one.runs_p_value));
  }
}

TEST_CASE("FitStatistics: AIC, AICc, BIC, R2 and RMSE on a worked constant fit", "[engine]") {
  // y = 1..5, constant c = 3: rss = 4 + 1 + 0 + 1 + 4 = 10, n = 5, k = 1 free + 1 = 2.
  // AIC = 5 ln 2 + 4 = 7.4657359028; AICc = AIC + 2*2*3/(5-2-1) = AIC + 6;
  // BIC = 5 ln 2 + 2 ln 5 = 6.6846117277; R2 = 0 (rss equals the total sum of squares);
  // RMSE = sqrt(2); se(c) = sqrt((10/4) / 5) = sqrt(0.5).
  const PointwiseModel model(
      {"c"}, [](double, const double* b) { return b[0]; },
      [](double, const double*, double* g) { g[0] = 1; });
  const FitStatistics stats = ComputeFitStatistics(
      MakeProblem(model, {1, 2, 3, 4, 5}, {1, 2, 3, 4, 5}), Eigen::VectorXd::Constant(1, 3));
  CHECK(stats.rss == Approx(10));
  CHECK(stats.aic == Approx(7.4657359028));
  CHECK(stats.aicc - stats.aic == Approx(6));
  CHECK(stats.bic == Approx(6.6846117277));
  CHECK(stats.bic - stats.aic == Approx(2 * (std::log(5.0) - 2)));
  CHECK(stats.r2 == Approx(0).margin(1e-15));
  CHECK(stats.rmse == Approx(std::sqrt(2.0)));
  CHECK(stats.standard_errors[0] == Approx(std::sqrt(0.5)));
}

TEST_CASE("FitStatistics: at_bound within the relative tolerance, absolute at a zero bound",
          "[engine]") {
  const PointwiseModel model(
      {"a", "b", "c"}, [](double x, const double* b) { return b[0] + b[1] * x + b[2] * x * x; },
      [](double x, const double*, double* g) {
        g[0] = 1;
        g[1] = x;
        g[2] = x * x;
      });
  Problem problem = MakeProblem(model, {1, 2, 3, 4, 5}, {1.1, 2.3, 2.9, 4.2, 5.1});
  problem.lower = Eigen::Vector3d(0, -10, 5);
  problem.upper = Eigen::Vector3d(10, 2, 20);
  // a is 1e-12 above a zero bound (absolute), b is 1e-10 relative below 2, c is 1e-6
  // relative above 5 (outside the default 1e-9).
  const Eigen::Vector3d params(1e-12, 2 * (1 - 1e-10), 5 * (1 + 1e-6));
  const FitStatistics stats = ComputeFitStatistics(problem, params);
  CHECK(stats.at_bound == std::vector<bool>{true, true, false});
  problem.is_fixed = {true, false, false};
  CHECK(ComputeFitStatistics(problem, params).at_bound == std::vector<bool>{false, true, false});
}

TEST_CASE("FitStatistics: dof 0 exact fit has no error estimate without absolute sigma",
          "[engine]") {
  const PointwiseModel model = LineModel();
  Problem problem = MakeProblem(model, {1, 3}, {2, 6});
  const FitStatistics stats = ComputeFitStatistics(problem, Eigen::Vector2d(2, 0));
  CHECK(stats.dof == 0);
  CHECK_FALSE(stats.has_standard_errors);
  CHECK(std::isnan(stats.standard_errors[0]));
  CHECK(std::isnan(stats.reduced_chi2));
  CHECK(std::isnan(stats.aic));
  // The correlation does not need the scale: -xbar / sqrt(mean x^2) = -2 / sqrt(5).
  CHECK(stats.correlation(0, 1) == Approx(-2 / std::sqrt(5.0)));
  problem.data.sigma = Eigen::Vector2d(0.5, 0.5);
  const FitStatistics absolute = ComputeFitStatistics(problem, Eigen::Vector2d(2, 0));
  CHECK(absolute.has_standard_errors);
  CHECK(std::isfinite(absolute.standard_errors[0]));
}

TEST_CASE("FitStatistics: r2 is undefined for a constant response", "[engine]") {
  // 0.1 is not exact in binary, so the total sum of squares about the computed mean need not
  // be exactly 0; the check is on the data instead.
  const PointwiseModel model = LineModel();
  const FitStatistics stats =
      ComputeFitStatistics(MakeProblem(model, {1, 2, 3, 4, 5, 6, 7}, std::vector<double>(7, 0.1)),
                           Eigen::Vector2d(0.01, 0.05));
  CHECK(std::isnan(stats.r2));
  CHECK(stats.message.find("r2 is undefined") != std::string::npos);
  CHECK(std::isfinite(stats.aic));
}

TEST_CASE("FitStatistics: non-finite model output is reported, not computed on", "[engine]") {
  const PointwiseModel model(
      {"b"}, [](double x, const double* b) { return std::log(b[0]) * x; },
      [](double x, const double* b, double* g) { g[0] = x / b[0]; });
  const FitStatistics stats = ComputeFitStatistics(MakeProblem(model, {1, 2, 3}, {1, 2, 3}),
                                                   Eigen::VectorXd::Constant(1, -1));
  CHECK_FALSE(stats.is_finite);
  CHECK(stats.message.find("model value at row 0") != std::string::npos);
  CHECK(std::isnan(stats.rss));
  CHECK(std::isnan(stats.standard_errors[0]));
}

TEST_CASE("StatisticsOptions: Validate names the field, the value and the rule", "[engine]") {
  std::string error;
  StatisticsOptions options;
  CHECK(options.Validate(&error));
  options.confidence_level = 1.5;
  CHECK_FALSE(options.Validate(&error));
  CHECK(error == "confidence_level = 1.5: must be in (0, 1)");
  options = StatisticsOptions();
  options.rank_tolerance = 0;
  CHECK_FALSE(options.Validate(&error));
  CHECK(error.rfind("rank_tolerance = 0: must be in [", 0) == 0);
  options = StatisticsOptions();
  options.at_bound_tolerance = -1;
  CHECK_FALSE(options.Validate(&error));
  CHECK(error == "at_bound_tolerance = -1: must be finite and >= 0");
}

}  // namespace foothold
