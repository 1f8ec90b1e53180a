// Multistart throughput: 256 starts of P2 (three gaussians + baseline, 10 parameters, 2000
// points) on 1 and on 2 threads, the two runs interleaved pair by pair. Reports starts per
// second, the throughput ratio (2 threads / 1 thread), and the load average and the
// process's processor time per wall second, which say how much of a second core the
// machine actually gave.
//
//   foothold_multistart_bench [--data DIR] [--pairs N] [--starts N] [--round-size N]

#include <sys/resource.h>

#include <cstdio>
#include <cstdlib>
#include <string>
#include <vector>

#include "bench_problems.h"
#include "bench_timing.h"
#include "engine/model/families/peak_models.h"
#include "engine/multistart/multistart.h"

namespace {

double ProcessCpuSeconds() {
  rusage usage;
  getrusage(RUSAGE_SELF, &usage);
  return usage.ru_utime.tv_sec + usage.ru_stime.tv_sec +
         1e-6 * (usage.ru_utime.tv_usec + usage.ru_stime.tv_usec);
}

struct Run {
  double wall = 0;
  double cpu = 0;
  int starts = 0;
  double best_rss = 0;
};

}  // namespace

int main(int argc, char** argv) {
  using namespace foothold;
  std::string data_dir = "bench/data";
  int pairs = 3, num_starts = 256;
  int round_size = MultistartOptions().round_size;
  for (int i = 1; i + 1 < argc; i += 2) {
    const std::string arg = argv[i];
    if (arg == "--data") {
      data_dir = argv[i + 1];
    } else if (arg == "--pairs") {
      pairs = std::max(1, std::atoi(argv[i + 1]));
    } else if (arg == "--round-size") {
      round_size = std::max(1, std::atoi(argv[i + 1]));
    } else if (arg == "--starts") {
      num_starts = std::max(1, std::atoi(argv[i + 1]));
    } else {
      std::fprintf(stderr, "unknown argument '%s'\n", arg.c_str());
      return 2;
    }
  }
  bench::BenchProblem data;
  std::string error;
  if (!bench::ReadProblem(data_dir, "P2", &data, &error)) {
    std::fprintf(stderr, "%s\n", error.c_str());
    return 1;
  }
  const int n = static_cast<int>(data.x.size());
  MultiGaussianModel model(3);
  Problem problem;
  problem.model = &model;
  problem.data.predictor_names = {"x"};
  problem.data.predictors = Eigen::Map<const Eigen::MatrixXd>(data.x.data(), n, 1);
  problem.data.response = Eigen::Map<const Eigen::VectorXd>(data.y.data(), n);
  // Bounds as a guesser would give them: heights >= 0, centers in the data range, widths
  // between a tenth of the spacing and the range, baseline within the y range.
  problem.lower.resize(10);
  problem.upper.resize(10);
  for (int k = 0; k < 3; ++k) {
    problem.lower.segment(3 * k, 3) << 0.0, 0.0, 0.001;
    problem.upper.segment(3 * k, 3) << 50.0, 10.0, 10.0;
  }
  problem.lower[9] = -10;
  problem.upper[9] = 10;
  std::vector<StartCandidate> candidates(1);
  candidates[0].origin = "user";
  candidates[0].parameters = Eigen::Map<const Eigen::VectorXd>(data.start.data(), 10);

  auto run = [&](int threads) {
    MultistartOptions options;
    options.max_starts = num_starts;
    options.num_threads = threads;
    options.use_stopping_rule = false;
    options.round_size = round_size;
    const double wall = bench::WallSeconds(), cpu = ProcessCpuSeconds();
    const MultistartSummary summary = RunMultistart(problem, candidates, SearchBox{}, options);
    Run result;
    result.wall = bench::WallSeconds() - wall;
    result.cpu = ProcessCpuSeconds() - cpu;
    result.starts = summary.num_starts_run;
    result.best_rss = summary.basins.empty() ? -1 : summary.basins.front().rss;
    return result;
  };

  std::printf("multistart: %d starts of P2 (10 parameters, %d points), round size %d\n", num_starts,
              n, round_size);
  std::printf(
      "| pair | 1 thread s | 2 threads s | throughput ratio | cpu/wall 1 thread | "
      "cpu/wall 2 threads | cpu 1 / cpu 2 | load |\n|---|---|---|---|---|---|---|---|\n");
  std::vector<double> ratios, one, two, usage, usage_one, cpu_ratio;
  for (int pair = 0; pair < pairs; ++pair) {
    Run a, b;
    if (pair % 2 == 0) {
      a = run(1);
      b = run(2);
    } else {
      b = run(2);
      a = run(1);
    }
    if (a.best_rss != b.best_rss || a.starts != b.starts) {
      std::printf("1 and 2 threads disagree: rss %.17g vs %.17g, starts %d vs %d\n", a.best_rss,
                  b.best_rss, a.starts, b.starts);
      return 1;
    }
    const double ratio = (a.starts / b.wall) / (a.starts / a.wall);
    ratios.push_back(ratio);
    one.push_back(a.wall);
    two.push_back(b.wall);
    usage.push_back(b.cpu / b.wall);
    usage_one.push_back(a.cpu / a.wall);
    cpu_ratio.push_back(a.cpu / b.cpu);
    std::printf("| %d | %.3f | %.3f | %.2f | %.2f | %.2f | %.2f | %.1f |\n", pair, a.wall, b.wall,
                ratio, a.cpu / a.wall, b.cpu / b.wall, a.cpu / b.cpu, bench::LoadAverage());
  }
  std::printf("starts per second: 1 thread %.0f, 2 threads %.0f; best rss %.12g\n",
              num_starts / bench::Median(one), num_starts / bench::Median(two), run(1).best_rss);
  std::printf("RATIO multistart threads2_over_threads1 %.4f\n", bench::Median(ratios));
  // cpu 1 / cpu 2 near 1 means the second thread adds no work (no spinning, no duplicated
  // fits); the wall-time ratio can then only reach 2 when the machine grants two cores.
  std::printf(
      "multistart cpu_per_wall_1thread %.2f cpu_per_wall_2threads %.2f "
      "cpu1_over_cpu2 %.3f load %.1f\n",
      bench::Median(usage_one), bench::Median(usage), bench::Median(cpu_ratio),
      bench::LoadAverage());
  return 0;
}
