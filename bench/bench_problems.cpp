#include "bench_problems.h"

#include <cmath>
#include <cstdint>
#include <cstdio>
#include <fstream>
#include <sstream>

namespace foothold {
namespace bench {
namespace {

constexpr std::uint64_t kSeed = 20261202;
constexpr double kPi = 3.141592653589793;

// splitmix64 and Box-Muller: the same numbers on every platform and standard library.
class Normal {
 public:
  explicit Normal(std::uint64_t seed) : state_(seed) {}
  double Next() {
    const double u1 = (static_cast<double>(Bits() >> 11) + 0.5) * 0x1.0p-53;
    const double u2 = static_cast<double>(Bits() >> 11) * 0x1.0p-53;
    return std::sqrt(-2 * std::log(u1)) * std::cos(2 * kPi * u2);
  }

 private:
  std::uint64_t Bits() {
    std::uint64_t z = (state_ += 0x9e3779b97f4a7c15ULL);
    z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
    z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
    return z ^ (z >> 31);
  }
  std::uint64_t state_;
};

double Gaussian(double x, double h, double c, double s) {
  const double u = (x - c) / s;
  return h * std::exp(-0.5 * u * u);
}

double Evaluate(Shape shape, const std::vector<double>& p, double x) {
  switch (shape) {
    case Shape::kGaussian:
      return Gaussian(x, p[0], p[1], p[2]);
    case Shape::kThreeGaussians:
      return Gaussian(x, p[0], p[1], p[2]) + Gaussian(x, p[3], p[4], p[5]) +
             Gaussian(x, p[6], p[7], p[8]) + p[9];
    case Shape::kBiexp:
      return p[0] * std::exp(-x / p[1]) + p[2] * std::exp(-x / p[3]) + p[4];
  }
  return 0;
}

BenchProblem Make(const std::string& name, const std::string& description, Shape shape, int n,
                  double x_min, double x_max, double noise, std::vector<double> truth,
                  std::vector<double> start, std::uint64_t stream) {
  BenchProblem problem;
  problem.name = name;
  problem.description = description;
  problem.shape = shape;
  problem.truth = std::move(truth);
  problem.start = std::move(start);
  Normal normal(kSeed + stream);
  for (int i = 0; i < n; ++i) {
    const double x = x_min + (x_max - x_min) * i / (n - 1);
    problem.x.push_back(x);
    problem.y.push_back(Evaluate(shape, problem.truth, x) + noise * normal.Next());
  }
  return problem;
}

// P1's start: (0.8 height, center + 0.5 sigma, 1.3 sigma).
std::vector<double> GaussianStart(const std::vector<double>& t) {
  return {0.8 * t[0], t[1] + 0.5 * t[2], 1.3 * t[2]};
}

}  // namespace

int NumParameters(Shape shape) {
  switch (shape) {
    case Shape::kGaussian:
      return 3;
    case Shape::kThreeGaussians:
      return 10;
    case Shape::kBiexp:
      return 5;
  }
  return 0;
}

const char* ToString(Shape shape) {
  switch (shape) {
    case Shape::kGaussian:
      return "gaussian";
    case Shape::kThreeGaussians:
      return "three_gaussians";
    case Shape::kBiexp:
      return "biexp";
  }
  return "?";
}

std::vector<BenchProblem> GenerateProblems() {
  std::vector<BenchProblem> problems;
  const std::vector<double> gaussian = {10.0, 5.0, 0.8};
  problems.push_back(Make("P1", "gaussian, 3 parameters, 1000 points", Shape::kGaussian, 1000, 0,
                          10, 0.1, gaussian, GaussianStart(gaussian), 1));
  // Each parameter 10-20% off, signs mixed.
  const std::vector<double> three = {5.0, 2.5, 0.6, 8.0, 5.0, 0.8, 4.0, 7.5, 0.7, 1.0};
  const std::vector<double> off = {+0.15, -0.10, +0.20, -0.12, +0.10,
                                   -0.18, +0.20, -0.10, +0.15, -0.15};
  std::vector<double> three_start;
  for (size_t k = 0; k < three.size(); ++k) three_start.push_back(three[k] * (1 + off[k]));
  problems.push_back(Make("P2", "three gaussians + baseline, 10 parameters, 2000 points",
                          Shape::kThreeGaussians, 2000, 0, 10, 0.05, three, three_start, 2));
  const std::vector<double> biexp = {5.0, 0.5, 2.0, 3.0, 0.5};
  const std::vector<double> biexp_start = {5.0 * 1.3, 0.5 * 0.7, 2.0 * 0.7, 3.0 * 1.3, 0.5 * 1.3};
  problems.push_back(Make("P3", "biexp_decay, 5 parameters, 500 points", Shape::kBiexp, 500, 0, 10,
                          0.02, biexp, biexp_start, 3));
  problems.push_back(Make("P4", "gaussian, 3 parameters, 100000 points", Shape::kGaussian, 100000,
                          0, 10, 0.1, gaussian, GaussianStart(gaussian), 4));
  return problems;
}

bool WriteProblem(const BenchProblem& problem, const std::string& dir, std::string* error) {
  const std::string path = dir + "/" + problem.name + ".txt";
  std::FILE* file = std::fopen(path.c_str(), "w");
  if (!file) {
    *error = "cannot write " + path;
    return false;
  }
  std::fprintf(file, "# %s: %s (generated, seed %llu)\n", problem.name.c_str(),
               problem.description.c_str(), static_cast<unsigned long long>(kSeed));
  std::fprintf(file, "shape %s\n", ToString(problem.shape));
  std::fprintf(file, "truth");
  for (double v : problem.truth) std::fprintf(file, " %.17g", v);
  std::fprintf(file, "\nstart");
  for (double v : problem.start) std::fprintf(file, " %.17g", v);
  std::fprintf(file, "\npoints %zu\n", problem.x.size());
  for (size_t i = 0; i < problem.x.size(); ++i) {
    std::fprintf(file, "%.17g %.17g\n", problem.x[i], problem.y[i]);
  }
  const bool ok = std::fclose(file) == 0;
  if (!ok) *error = "cannot write " + path;
  return ok;
}

bool ReadProblem(const std::string& dir, const std::string& name, BenchProblem* problem,
                 std::string* error) {
  const std::string path = dir + "/" + name + ".txt";
  std::ifstream in(path);
  if (!in) {
    *error = "cannot read " + path + " (run the benchmark with --write-data first)";
    return false;
  }
  *problem = BenchProblem();
  problem->name = name;
  std::string line;
  std::getline(in, line);
  const size_t colon = line.find(": ");
  if (colon != std::string::npos) problem->description = line.substr(colon + 2);
  std::string key, shape;
  in >> key >> shape;
  if (shape == "gaussian") {
    problem->shape = Shape::kGaussian;
  } else if (shape == "three_gaussians") {
    problem->shape = Shape::kThreeGaussians;
  } else if (shape == "biexp") {
    problem->shape = Shape::kBiexp;
  } else {
    *error = path + ": unknown shape '" + shape + "'";
    return false;
  }
  const int p = NumParameters(problem->shape);
  problem->truth.resize(p);
  problem->start.resize(p);
  in >> key;
  for (double& v : problem->truth) in >> v;
  in >> key;
  for (double& v : problem->start) in >> v;
  size_t n = 0;
  in >> key >> n;
  problem->x.resize(n);
  problem->y.resize(n);
  for (size_t i = 0; i < n; ++i) in >> problem->x[i] >> problem->y[i];
  if (!in) {
    *error = path + ": truncated or malformed";
    return false;
  }
  return true;
}

}  // namespace bench
}  // namespace foothold
