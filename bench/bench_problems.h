#pragma once
// The benchmark problems: generated with a fixed seed, written to text files with every
// digit (%.17g), read back by the benchmark so every solver fits exactly the same numbers.
//
//   P1  gaussian (height, center, sigma; no baseline) + noise, 1,000 points
//   P2  three gaussians + constant baseline (10 parameters), 2,000 points
//   P3  biexp_decay (amplitude1, tau1, amplitude2, tau2, baseline), 500 points
//   P4  P1's curve with 100,000 points
//   P5  P1's data, fitted by foothold through an expression model (the AD path)

#include <string>
#include <vector>

namespace foothold {
namespace bench {

// The closed form every reference solver codes by hand for a problem.
enum class Shape {
  kGaussian,        // h exp(-(x-c)^2 / (2 s^2))
  kThreeGaussians,  // sum of three such peaks + b
  kBiexp,           // a1 exp(-x/t1) + a2 exp(-x/t2) + b
};

struct BenchProblem {
  std::string name;  // "P1"
  std::string description;
  Shape shape = Shape::kGaussian;
  std::vector<double> x;
  std::vector<double> y;
  std::vector<double> truth;  // generating parameters
  std::vector<double> start;  // the start every solver uses
};

// Generates P1..P4 (P5 shares P1's file) with the fixed seed.
std::vector<BenchProblem> GenerateProblems();
// Writes `problem` to dir/<name>.txt; false with a message on an I/O error.
bool WriteProblem(const BenchProblem& problem, const std::string& dir, std::string* error);
// Reads dir/<name>.txt.
bool ReadProblem(const std::string& dir, const std::string& name, BenchProblem* problem,
                 std::string* error);
int NumParameters(Shape shape);
const char* ToString(Shape shape);

}  // namespace bench
}  // namespace foothold
