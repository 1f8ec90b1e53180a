// Multistart throughput: 256 starts of P2 (three gaussians + baseline, 10 parameters, 2000
// points) on 1 and on 2 threads, the two runs interleaved pair by pair. Reports starts per
// second, the throughput ratio (2 threads / 1 thread), and the load average and the
// process's processor time per wall second, which say how much of a second core the
// machine actually gave.
//
// Beside each pair it runs the same start points as plain independent fits on 1 and 2
// std::threads (no rounds, no clustering): that ratio is what the machine allows at that
// moment, so driver ratio / independent ratio is the driver's own efficiency.
//
//   foothold_multistart_bench [--data DIR] [--pairs N] [--starts N] [--round-size N]
//   foothold_multistart_bench --profile [--threads N] ...   one driver run (for callgrind)

#include <sys/resource.h>
#include <unistd.h>

#include <algorithm>
#include <atomic>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <memory>
#include <string>
#include <thread>
#include <vector>

#include "bench_problems.h"
#include "bench_timing.h"
#include "engine/model/families/peak_models.h"
#include "engine/multistart/multistart.h"
#include "engine/solve/local_fit.h"

namespace {

using namespace foothold;

double ProcessCpuSeconds() {
  rusage usage;
  getrusage(RUSAGE_SELF, &usage);
  return usage.ru_utime.tv_sec + usage.ru_stime.tv_sec +
         1e-6 * (usage.ru_utime.tv_usec + usage.ru_stime.tv_usec);
}

// Busy processor seconds of the whole machine so far (/proc/stat: every state but idle and
// iowait), or NaN.
double MachineBusySeconds() {
  std::FILE* file = std::fopen("/proc/stat", "r");
  if (!file) return std::nan("");
  unsigned long long user, nice, system, idle, iowait, irq, softirq, steal;
  const int read = std::fscanf(file, "cpu %llu %llu %llu %llu %llu %llu %llu %llu", &user, &nice,
                               &system, &idle, &iowait, &irq, &softirq, &steal);
  std::fclose(file);
  if (read != 8) return std::nan("");
  return static_cast<double>(user + nice + system + irq + softirq + steal) /
         static_cast<double>(sysconf(_SC_CLK_TCK));
}

// A pair is quiet when other processes used less than this many cores during both runs.
constexpr double kQuietCores = 0.1;

struct Run {
  double wall = 0;
  double cpu = 0;
  double others = 0;  // cores used by other processes, averaged over the run
  int starts = 0;
  double best_rss = 0;
  double fit_seconds = 0;      // sum of the start log's per-fit wall times
  double max_fit_seconds = 0;  // the longest fit
};

struct Args {
  std::string data_dir = "bench/data";
  int pairs = 3;
  int num_starts = 256;
  int round_size = MultistartOptions().round_size;
  bool profile = false;
  int profile_threads = 1;
};

bool ParseArgs(int argc, char** argv, Args* args) {
  for (int i = 1; i < argc; ++i) {
    const std::string arg = argv[i];
    if (arg == "--profile") {
      args->profile = true;
      continue;
    }
    if (i + 1 >= argc) {
      std::fprintf(stderr, "'%s' needs a value\n", arg.c_str());
      return false;
    }
    const char* value = argv[++i];
    if (arg == "--data") {
      args->data_dir = value;
    } else if (arg == "--pairs") {
      args->pairs = std::max(1, std::atoi(value));
    } else if (arg == "--round-size") {
      args->round_size = std::max(1, std::atoi(value));
    } else if (arg == "--starts") {
      args->num_starts = std::max(1, std::atoi(value));
    } else if (arg == "--threads") {
      args->profile_threads = std::max(1, std::atoi(value));
    } else {
      std::fprintf(stderr, "unknown argument '%s'\n", arg.c_str());
      return false;
    }
  }
  return true;
}

// The same start points as plain fits on `threads` std::threads, items taken dynamically,
// each thread with its own model clone and problem copy made in that thread.
Run RunIndependent(const Problem& problem, const std::vector<Eigen::VectorXd>& starts,
                   int threads) {
  std::atomic<int> next{0};
  auto work = [&] {
    std::unique_ptr<Model> model = problem.model->Clone();
    Problem own = problem;
    own.model = model.get();
    LocalFitOptions options;
    for (int item = next++; item < static_cast<int>(starts.size()); item = next++) {
      RunLocalFit(own, starts[item], options);
    }
  };
  const double wall = bench::WallSeconds(), cpu = ProcessCpuSeconds();
  const double busy = MachineBusySeconds();
  std::vector<std::thread> helpers;
  for (int t = 1; t < threads; ++t) helpers.emplace_back(work);
  work();
  for (std::thread& helper : helpers) helper.join();
  Run result;
  result.wall = bench::WallSeconds() - wall;
  result.cpu = ProcessCpuSeconds() - cpu;
  result.others = (MachineBusySeconds() - busy - result.cpu) / result.wall;
  result.starts = static_cast<int>(starts.size());
  return result;
}

}  // namespace

int main(int argc, char** argv) {
  Args args;
  if (!ParseArgs(argc, argv, &args)) return 2;
  bench::BenchProblem data;
  std::string error;
  if (!bench::ReadProblem(args.data_dir, "P2", &data, &error)) {
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

  std::vector<Eigen::VectorXd> start_points;
  auto run = [&](int threads) {
    MultistartOptions options;
    options.max_starts = args.num_starts;
    options.num_threads = threads;
    options.use_stopping_rule = false;
    options.round_size = args.round_size;
    const double wall = bench::WallSeconds(), cpu = ProcessCpuSeconds();
    const double busy = MachineBusySeconds();
    const MultistartSummary summary = RunMultistart(problem, candidates, SearchBox{}, options);
    Run result;
    result.wall = bench::WallSeconds() - wall;
    result.cpu = ProcessCpuSeconds() - cpu;
    result.others = (MachineBusySeconds() - busy - result.cpu) / result.wall;
    result.starts = summary.num_starts_run;
    result.best_rss = summary.basins.empty() ? -1 : summary.basins.front().rss;
    start_points.clear();
    for (const StartRecord& record : summary.starts) {
      result.fit_seconds += record.seconds;
      result.max_fit_seconds = std::max(result.max_fit_seconds, record.seconds);
      start_points.push_back(record.start);
    }
    if (args.profile) std::printf("%s\n", summary.BriefReport().c_str());
    return result;
  };
  if (args.profile) {
    const Run once = run(args.profile_threads);
    std::printf("wall %.3f s, cpu %.3f s, fits %.3f s (mean %.4f s, longest %.4f s)\n", once.wall,
                once.cpu, once.fit_seconds, once.fit_seconds / once.starts, once.max_fit_seconds);
    return 0;
  }

  std::printf("multistart: %d starts of P2 (10 parameters, %d points), round size %d\n",
              args.num_starts, n, args.round_size);
  std::printf(
      "| pair | 1 thread s | 2 threads s | throughput ratio | cpu/wall 1 thread | "
      "cpu/wall 2 threads | cpu 1 / cpu 2 | independent ratio | independent cpu 1 / cpu 2 | "
      "others' cores 1 / 2 threads | load |\n|---|---|---|---|---|---|---|---|---|---|---|\n");
  std::vector<double> ratios, one, two, usage, usage_one, cpu_ratio, free_ratios, free_cpu;
  std::vector<double> driver_share, quiet_ratios;
  for (int pair = 0; pair < args.pairs; ++pair) {
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
    Run c, d;
    if (pair % 2 == 0) {
      c = RunIndependent(problem, start_points, 1);
      d = RunIndependent(problem, start_points, 2);
    } else {
      d = RunIndependent(problem, start_points, 2);
      c = RunIndependent(problem, start_points, 1);
    }
    const double ratio = a.wall / b.wall;
    ratios.push_back(ratio);
    one.push_back(a.wall);
    two.push_back(b.wall);
    usage.push_back(b.cpu / b.wall);
    usage_one.push_back(a.cpu / a.wall);
    cpu_ratio.push_back(a.cpu / b.cpu);
    free_ratios.push_back(c.wall / d.wall);
    free_cpu.push_back(c.cpu / d.cpu);
    driver_share.push_back(1 - a.fit_seconds / a.wall);
    // Quiet: other processes used less than kQuietCores on average during both runs.
    if (a.others < kQuietCores && b.others < kQuietCores) quiet_ratios.push_back(ratio);
    std::printf(
        "| %d | %.3f | %.3f | %.2f | %.2f | %.2f | %.2f | %.2f | %.2f | %.2f / %.2f | %.1f |\n",
        pair, a.wall, b.wall, ratio, a.cpu / a.wall, b.cpu / b.wall, a.cpu / b.cpu, c.wall / d.wall,
        c.cpu / d.cpu, a.others, b.others, bench::LoadAverage());
  }
  std::printf("starts per second: 1 thread %.0f, 2 threads %.0f; best rss %.12g\n",
              args.num_starts / bench::Median(one), args.num_starts / bench::Median(two),
              run(1).best_rss);
  std::printf("RATIO multistart threads2_over_threads1 %.4f\n", bench::Median(ratios));
  // cpu 1 / cpu 2 near 1 means the second thread adds no work (no spinning, no duplicated
  // fits); the wall-time ratio can then only reach 2 when the machine grants two cores.
  std::printf(
      "multistart cpu_per_wall_1thread %.2f cpu_per_wall_2threads %.2f "
      "cpu1_over_cpu2 %.3f load %.1f\n",
      bench::Median(usage_one), bench::Median(usage), bench::Median(cpu_ratio),
      bench::LoadAverage());
  // The driver's serial share on 1 thread (planning, clustering, statistics between fits),
  // and the same fits without the driver: the ceiling the machine gave at the time.
  std::printf(
      "multistart driver_share_1thread %.3f independent_ratio %.3f "
      "independent_cpu1_over_cpu2 %.3f\n",
      bench::Median(driver_share), bench::Median(free_ratios), bench::Median(free_cpu));
  std::printf("multistart quiet_pairs %zu of %d, median ratio of quiet pairs %.3f\n",
              quiet_ratios.size(), args.pairs, bench::Median(quiet_ratios));
  return 0;
}
