// foothold's Levenberg-Marquardt beside reference solvers, same data, same start, same
// process. A plain harness: per problem every solver fits once (the end points must agree:
// rss within 1e-9 relative of foothold's), then rounds of A/B pairs (foothold, reference;
// order alternating) timed in thread processor time, so machine drift and load cancel in
// the per-round ratios. Prints a table per problem and, last, one line per problem and
// reference:  RATIO <problem> <reference> <foothold time / reference time>.
//
//   foothold_solver_bench --write-data DIR        generate P1..P4 into DIR and exit
//   foothold_solver_bench [--data DIR] [--rounds N] [--problems P1,P3] [--batch-ms M]
//   foothold_solver_bench --lower-bound           measured exp and multiply-add costs only
//   foothold_solver_bench --profile SOLVER --problems P1 [--fits N]
//                                                 N fits of one solver, untimed (for callgrind)

#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <map>
#include <memory>
#include <string>
#include <vector>

#include "bench_problems.h"
#include "bench_timing.h"
#include "engine/model/expression_model.h"
#include "engine/model/families/families.h"
#include "engine/model/families/internal/vector_exp.h"
#include "engine/solve/levenberg_marquardt.h"
#include "reference_solvers.h"

namespace foothold {
namespace bench {
namespace {

constexpr double kSameMinimum = 1e-9;  // relative rss agreement required before timing

// foothold on a bench problem: the catalogue family where one exists (P1, P4: the gaussian
// family with its baseline fixed at 0, so the family's code path is what runs), or the
// expression model for P5.
class FootholdSolver : public Solver {
 public:
  FootholdSolver(const BenchProblem& problem, bool use_expression)
      : use_expression_(use_expression) {
    const int n = static_cast<int>(problem.x.size());
    problem_.data.predictor_names = {"x"};
    problem_.data.predictors = Eigen::Map<const Eigen::MatrixXd>(problem.x.data(), n, 1);
    problem_.data.response = Eigen::Map<const Eigen::VectorXd>(problem.y.data(), n);
    std::vector<double> start = problem.start;
    switch (problem.shape) {
      case Shape::kGaussian:
        if (use_expression) {
          std::string error;
          model_ = ParseExpressionModel("h*exp(-(x-m)^2/(2*s^2))", {"x"}, {"h", "m", "s"},
                                        ExpressionOptions(), &error);
          if (!model_) {
            std::fprintf(stderr, "expression: %s\n", error.c_str());
            std::exit(1);
          }
        } else {
          model_ = std::make_unique<GaussianModel>();
          start.push_back(0.0);
          problem_.is_fixed = {false, false, false, true};
        }
        break;
      case Shape::kThreeGaussians:
        model_ = std::make_unique<MultiGaussianModel>(3);
        break;
      case Shape::kBiexp:
        model_ = std::make_unique<BiexpDecayModel>();
        break;
    }
    problem_.model = model_.get();
    start_ = Eigen::Map<const Eigen::VectorXd>(start.data(), start.size());
    num_reported_ = NumParameters(problem.shape);
    options_.cost_tolerance = kTolerance;
    options_.step_tolerance = kTolerance;
    options_.gradient_tolerance = 0;
  }
  const char* Name() const override { return use_expression_ ? "foothold_expr" : "foothold"; }

  FitResult Fit() override {
    const LocalFitSummary summary = MinimizeLevenbergMarquardt(problem_, start_, options_);
    FitResult result;
    result.parameters.assign(summary.parameters.data(), summary.parameters.data() + num_reported_);
    result.rss = summary.final_cost;
    result.iterations = summary.num_iterations;
    result.evaluations = summary.num_evaluations;
    result.jacobian_evaluations = summary.num_jacobian_evaluations;
    result.status = ToString(summary.termination);
    return result;
  }

 private:
  bool use_expression_;
  std::unique_ptr<Model> model_;
  Problem problem_;
  Eigen::VectorXd start_;
  int num_reported_ = 0;
  LevenbergMarquardtOptions options_;
};

struct Args {
  std::string data_dir = "bench/data";
  std::string write_dir;
  int rounds = 15;
  double batch_seconds = 0.004;
  std::vector<std::string> problems = {"P1", "P2", "P3", "P4", "P5"};
  bool lower_bound_only = false;
  std::string profile_solver;  // non-empty: run only this solver, --fits times
  int num_profile_fits = 100;
};

std::vector<std::string> Split(const std::string& text) {
  std::vector<std::string> parts;
  size_t from = 0;
  while (from <= text.size()) {
    const size_t comma = text.find(',', from);
    const size_t to = comma == std::string::npos ? text.size() : comma;
    if (to > from) parts.push_back(text.substr(from, to - from));
    from = to + 1;
  }
  return parts;
}

Args ParseArgs(int argc, char** argv) {
  Args args;
  for (int i = 1; i < argc; ++i) {
    const std::string arg = argv[i];
    auto value = [&]() -> std::string {
      if (i + 1 >= argc) {
        std::fprintf(stderr, "%s needs a value\n", arg.c_str());
        std::exit(2);
      }
      return argv[++i];
    };
    if (arg == "--data") {
      args.data_dir = value();
    } else if (arg == "--write-data") {
      args.write_dir = value();
    } else if (arg == "--rounds") {
      args.rounds = std::max(1, std::atoi(value().c_str()));
    } else if (arg == "--batch-ms") {
      args.batch_seconds = std::max(0.1, std::atof(value().c_str())) * 1e-3;
    } else if (arg == "--problems") {
      args.problems = Split(value());
    } else if (arg == "--profile") {
      args.profile_solver = value();
    } else if (arg == "--fits") {
      args.num_profile_fits = std::max(1, std::atoi(value().c_str()));
    } else if (arg == "--lower-bound") {
      args.lower_bound_only = true;
    } else {
      std::fprintf(stderr, "unknown argument '%s'\n", arg.c_str());
      std::exit(2);
    }
  }
  return args;
}

// Processor seconds per fit over a batch of `count` fits.
double TimeBatch(Solver* solver, int count) {
  const double from = ThreadCpuSeconds();
  for (int k = 0; k < count; ++k) solver->Fit();
  return (ThreadCpuSeconds() - from) / count;
}

int BatchSize(Solver* solver, double batch_seconds) {
  const double once = std::max(TimeBatch(solver, 1), 1e-7);
  return std::max(1, static_cast<int>(std::ceil(batch_seconds / once)));
}

// Measured costs for the arithmetic lower bound: exp (the faster of std::exp and the
// engine's vectorised exp) and a multiply-add, both as throughput over independent
// elements (what a vectorised model loop can reach).
struct ArithmeticCosts {
  double std_exp_seconds = 0;
  double vector_exp_seconds = 0;
  double fma_seconds = 0;
  double ExpSeconds() const { return std::min(std_exp_seconds, vector_exp_seconds); }
};

ArithmeticCosts MeasureArithmetic() {
  constexpr int kN = 4096;
  std::vector<double> in(kN), out(kN);
  for (int i = 0; i < kN; ++i) in[i] = -0.5 * (i % 97) * 0.01;
  std::vector<double> std_samples, vector_samples, fma_samples;
  for (int round = 0; round < 21; ++round) {
    double from = ThreadCpuSeconds();
    for (int rep = 0; rep < 50; ++rep) {
      for (int i = 0; i < kN; ++i) out[i] = std::exp(in[i] + 1e-9 * rep);
    }
    std_samples.push_back((ThreadCpuSeconds() - from) / (50.0 * kN));
    from = ThreadCpuSeconds();
    for (int rep = 0; rep < 50; ++rep) {
      in[rep] += 1e-12;
      internal::VectorExp(in.data(), out.data(), kN);
    }
    vector_samples.push_back((ThreadCpuSeconds() - from) / (50.0 * kN));
    from = ThreadCpuSeconds();
    for (int rep = 0; rep < 200; ++rep) {
      const double a = 1.0 + 1e-9 * rep;
      for (int i = 0; i < kN; ++i) out[i] = out[i] * a + in[i];
    }
    fma_samples.push_back((ThreadCpuSeconds() - from) / (200.0 * kN));
  }
  volatile double sink = out[kN / 2];
  (void)sink;
  return {Median(std_samples), Median(vector_samples), Median(fma_samples)};
}

// The model and Jacobian arithmetic a fit cannot avoid, from foothold's own counts: one exp
// per point and exponential term in every model evaluation (a Jacobian evaluation shares
// the exp of its values), plus the multiply-adds per point of the values and of the
// Jacobian columns.
double LowerBoundSeconds(const BenchProblem& problem, const FitResult& result,
                         const ArithmeticCosts& costs) {
  double exps_per_point = 1, value_madds = 3, jacobian_madds = 4;
  switch (problem.shape) {
    case Shape::kGaussian:
      break;
    case Shape::kThreeGaussians:
      exps_per_point = 3, value_madds = 9, jacobian_madds = 12;
      break;
    case Shape::kBiexp:
      exps_per_point = 2, value_madds = 4, jacobian_madds = 4;
      break;
  }
  const double n = static_cast<double>(problem.x.size());
  const double values = result.evaluations * n *
                        (exps_per_point * costs.ExpSeconds() + value_madds * costs.fma_seconds);
  const double jacobians = result.jacobian_evaluations * n * jacobian_madds * costs.fma_seconds;
  return values + jacobians;
}

struct SolverRow {
  std::unique_ptr<Solver> solver;
  FitResult result;
  bool same_minimum = true;
  int batch = 1;
  std::vector<double> seconds;  // per fit, one per round
  std::vector<double> ratios;   // foothold / this, per round
};

void RunProblem(const BenchProblem& problem, const std::string& label, bool use_expression,
                const Args& args, const ArithmeticCosts& costs,
                std::vector<std::string>* ratio_lines) {
  std::vector<SolverRow> rows;
  auto add = [&rows](std::unique_ptr<Solver> solver) {
    SolverRow row;
    row.solver = std::move(solver);
    rows.push_back(std::move(row));
  };
  add(std::make_unique<FootholdSolver>(problem, use_expression));
  if (use_expression) add(std::make_unique<FootholdSolver>(problem, false));
  add(MakeMinpackSolver(problem));
  add(MakeEigenLmSolver(problem));
  add(MakeCeresSolver(problem, true));
  add(MakeCeresSolver(problem, false));
  add(MakeGslSolver(problem));

  if (!args.profile_solver.empty()) {
    for (SolverRow& row : rows) {
      if (row.solver->Name() != args.profile_solver) continue;
      for (int k = 0; k < args.num_profile_fits; ++k) row.result = row.solver->Fit();
      std::printf("%s %s: rss %.15g, %d iterations\n", label.c_str(), row.solver->Name(),
                  row.result.rss, row.result.iterations);
    }
    return;
  }
  for (SolverRow& row : rows) row.result = row.solver->Fit();
  const double reference_rss = rows[0].result.rss;
  for (SolverRow& row : rows) {
    row.same_minimum =
        std::abs(row.result.rss - reference_rss) <= kSameMinimum * std::abs(reference_rss);
    row.batch = BatchSize(row.solver.get(), args.batch_seconds);
  }

  SolverRow& foothold = rows[0];
  for (int round = 0; round < args.rounds; ++round) {
    for (size_t k = 1; k < rows.size(); ++k) {
      SolverRow& other = rows[k];
      if (!other.same_minimum) continue;
      double a, b;
      if ((round + k) % 2 == 0) {
        a = TimeBatch(foothold.solver.get(), foothold.batch);
        b = TimeBatch(other.solver.get(), other.batch);
      } else {
        b = TimeBatch(other.solver.get(), other.batch);
        a = TimeBatch(foothold.solver.get(), foothold.batch);
      }
      foothold.seconds.push_back(a);
      other.seconds.push_back(b);
      other.ratios.push_back(a / b);
    }
  }

  std::printf("\n## %s: %s%s, %zu points, load %.1f\n", label.c_str(), problem.description.c_str(),
              use_expression ? " (foothold: expression model)" : "", problem.x.size(),
              LoadAverage());
  std::printf(
      "| solver | us/fit | iterations | evaluations | jacobians | rss | foothold/solver "
      "| status |\n|---|---|---|---|---|---|---|---|\n");
  double fastest = 0;
  std::string fastest_name;
  for (size_t k = 0; k < rows.size(); ++k) {
    const SolverRow& row = rows[k];
    const double us = 1e6 * Median(row.seconds);
    char ratio[32] = "-";
    if (k > 0 && row.same_minimum) std::snprintf(ratio, sizeof ratio, "%.3f", Median(row.ratios));
    std::printf("| %s | %s | %d | %d | %d | %.12g | %s | %s |\n", row.solver->Name(),
                row.same_minimum ? std::to_string(static_cast<int>(us + 0.5)).c_str() : "not timed",
                row.result.iterations, row.result.evaluations, row.result.jacobian_evaluations,
                row.result.rss, ratio, row.result.status.c_str());
    if (!row.same_minimum) {
      std::printf("  %s did not reach foothold's minimum: rss %.15g vs %.15g\n", row.solver->Name(),
                  row.result.rss, reference_rss);
    }
    if (k > 0 && row.same_minimum) {
      const std::string name = row.solver->Name();
      char line[160];
      std::snprintf(line, sizeof line, "RATIO %s %s %.4f", label.c_str(), name.c_str(),
                    Median(row.ratios));
      ratio_lines->push_back(line);
      const bool is_reference = name.rfind("foothold", 0) != 0;
      if (is_reference && (fastest == 0 || us < fastest)) {
        fastest = us;
        fastest_name = name;
      }
    }
  }
  const double foothold_us = 1e6 * Median(foothold.seconds);
  std::printf("foothold %.1f us per fit = %.4f us per point; fastest reference %s\n", foothold_us,
              foothold_us / problem.x.size(), fastest_name.c_str());
  if (!use_expression) {
    const double bound_us = 1e6 * LowerBoundSeconds(problem, foothold.result, costs);
    std::printf(
        "arithmetic lower bound %.1f us (foothold's %d evaluations, %d with Jacobian); "
        "foothold / bound = %.2f\n",
        bound_us, foothold.result.evaluations, foothold.result.jacobian_evaluations,
        foothold_us / bound_us);
  }
}

}  // namespace
}  // namespace bench
}  // namespace foothold

int main(int argc, char** argv) {
  using namespace foothold::bench;
  const Args args = ParseArgs(argc, argv);
  std::string error;
  if (!args.write_dir.empty()) {
    for (const BenchProblem& problem : GenerateProblems()) {
      if (!WriteProblem(problem, args.write_dir, &error)) {
        std::fprintf(stderr, "%s\n", error.c_str());
        return 1;
      }
    }
    return 0;
  }
  const ArithmeticCosts costs =
      args.profile_solver.empty() ? MeasureArithmetic() : ArithmeticCosts{1e-9, 1e-9, 1e-10};
  if (args.profile_solver.empty()) {
    std::printf(
        "measured (throughput, thread CPU time): std::exp %.2f ns, foothold vector exp "
        "%.2f ns, multiply-add %.3f ns\n",
        1e9 * costs.std_exp_seconds, 1e9 * costs.vector_exp_seconds, 1e9 * costs.fma_seconds);
  }
  if (args.lower_bound_only) return 0;

  std::vector<std::string> ratio_lines;
  std::map<std::string, BenchProblem> loaded;
  for (const std::string& label : args.problems) {
    const std::string file = label == "P5" ? "P1" : label;
    if (!loaded.count(file)) {
      BenchProblem problem;
      if (!ReadProblem(args.data_dir, file, &problem, &error)) {
        std::fprintf(stderr, "%s\n", error.c_str());
        return 1;
      }
      loaded[file] = problem;
    }
    RunProblem(loaded[file], label, label == "P5", args, costs, &ratio_lines);
  }
  std::printf("\n");
  for (const std::string& line : ratio_lines) std::printf("%s\n", line.c_str());
  return 0;
}
