// The daemon's overhead and throughput on loopback, against `foothold serve` started as a
// child process on a free port with a temporary store:
//
//   (a) round trip of a small synchronous fit (gaussian, 200 points, default starts):
//       POST /v1/fits with Prefer: wait=30, timed from the first byte sent to the last byte
//       read, interleaved with the engine-only time of the same request (RunFit in this
//       process, same seed, same threads). RATIO daemon roundtrip_over_engine is the median
//       of the per-round ratios.
//   (b) GET /v1/fits/{id} of that done job from 16 keep-alive clients, each on its own
//       connection with a fixed number of requests: requests per second, p50 and p99
//       latency, and the errors (any answer but 200, any failed request), which must be 0.
//   (c) what throttled progress saves: the median time of one progress write to a store like
//       the daemon's (WAL, synchronous=FULL) in the same temporary folder, and the writes
//       ProgressThrottle makes for the reports of one job's starts replayed at the pace
//       of the engine-only fit, against one write per start without it.
//
//   foothold_daemon_bench [--rounds 31] [--clients 16] [--requests 500] [--workers 1]
//                         [--foothold PATH]
#include <signal.h>
#include <spawn.h>
#include <sys/wait.h>
#include <unistd.h>

#include <algorithm>
#include <atomic>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <memory>
#include <random>
#include <string>
#include <thread>
#include <vector>

#include "bench/bench_timing.h"
#include "server/fit_service.h"
#include "server/http/http_client.h"
#include "server/jobs/progress_throttle.h"
#include "server/jobs/sqlite_job_store.h"
#include "server/json_codec.h"

extern char** environ;

namespace foothold {
namespace {

struct Args {
  int rounds = 31;
  int clients = 16;
  int requests = 500;  // per client
  int workers = 1;
  std::string foothold = FOOTHOLD_BINARY;
};

bool ParseArgs(int argc, char** argv, Args* args) {
  for (int i = 1; i < argc; ++i) {
    const std::string flag = argv[i];
    if (i + 1 >= argc) return false;
    const std::string value = argv[++i];
    if (flag == "--rounds") {
      args->rounds = std::atoi(value.c_str());
    } else if (flag == "--clients") {
      args->clients = std::atoi(value.c_str());
    } else if (flag == "--requests") {
      args->requests = std::atoi(value.c_str());
    } else if (flag == "--workers") {
      args->workers = std::atoi(value.c_str());
    } else if (flag == "--foothold") {
      args->foothold = value;
    } else {
      return false;
    }
  }
  return args->rounds > 0 && args->clients > 0 && args->requests > 0 && args->workers > 0;
}

// A gaussian peak on a small baseline with normal noise (fixed seed): 200 points.
FitRequest GaussianRequest() {
  std::mt19937_64 random(20261202);
  std::normal_distribution<double> noise(0.0, 0.08);
  std::vector<double> x, y;
  for (int i = 0; i < 200; ++i) {
    x.push_back(400.0 + i * 2.0);
    const double z = (x.back() - 590.0) / 35.0;
    y.push_back(5.0 * std::exp(-0.5 * z * z) + 0.3 + noise(random));
  }
  FitRequest request;
  request.model.family = "gaussian";
  std::string ignored;
  request.data.AddColumn("x", x, &ignored);
  request.data.AddColumn("y", y, &ignored);
  request.seed = 7;
  return request;
}

// `foothold serve` on a free loopback port; the port is read from its first stdout line.
struct Daemon {
  pid_t pid = -1;
  int port = 0;
  std::string dir;

  bool Start(const Args& args) {
    char dir_template[] = "/tmp/foothold-daemon-bench-XXXXXX";
    if (!mkdtemp(dir_template)) return false;
    dir = dir_template;
    int pipe_fds[2];
    if (pipe(pipe_fds) != 0) return false;
    posix_spawn_file_actions_t actions;
    posix_spawn_file_actions_init(&actions);
    posix_spawn_file_actions_adddup2(&actions, pipe_fds[1], 1);
    posix_spawn_file_actions_addclose(&actions, pipe_fds[0]);
    // The request log goes to a file: writing it is part of what the daemon costs.
    const std::string log = dir + "/daemon.log";
    posix_spawn_file_actions_addopen(&actions, 2, log.c_str(), O_WRONLY | O_CREAT | O_APPEND, 0644);
    std::vector<std::string> words = {
        args.foothold, "serve",           "--port",    "0",
        "--store",     dir + "/bench.db", "--workers", std::to_string(args.workers)};
    std::vector<char*> argv;
    for (std::string& word : words) argv.push_back(&word[0]);
    argv.push_back(nullptr);
    const int spawned =
        posix_spawn(&pid, args.foothold.c_str(), &actions, nullptr, argv.data(), environ);
    posix_spawn_file_actions_destroy(&actions);
    close(pipe_fds[1]);
    if (spawned != 0) return false;
    std::string line;
    char c;
    while (read(pipe_fds[0], &c, 1) == 1 && c != '\n') line += c;
    close(pipe_fds[0]);
    const size_t colon = line.rfind(':');
    port = colon == std::string::npos ? 0 : std::atoi(line.c_str() + colon + 1);
    return port > 0;
  }

  ~Daemon() {
    if (pid > 0) {
      kill(pid, SIGTERM);
      waitpid(pid, nullptr, 0);
    }
    if (!dir.empty()) {
      for (const char* name : {"/bench.db", "/bench.db-wal", "/bench.db-shm", "/daemon.log"}) {
        std::remove((dir + name).c_str());
      }
      rmdir(dir.c_str());
    }
  }
};

double Percentile(std::vector<double> values, double fraction) {
  std::sort(values.begin(), values.end());
  const size_t at = static_cast<size_t>(std::ceil(fraction * values.size())) - 1;
  return values[std::min(at, values.size() - 1)];
}

struct RoundTrips {
  std::string job_id;
  int num_starts = 0;  // starts the fit ran
  double daemon_median = 0;
  double engine_median = 0;
  double ratio_median = 0;
};

// (a): daemon and engine alternate, and which goes first alternates too, so that a change
// in machine load falls on both.
bool MeasureRoundTrips(const Args& args, const DaemonUrl& url, RoundTrips* out) {
  const FitRequest request = GaussianRequest();
  const std::string body = EncodeFitRequest(request).dump();
  HttpClient client(url, "", 120);
  std::vector<double> daemon, engine, ratios;
  std::printf("| round | daemon ms | engine ms | ratio | load |\n|---|---|---|---|---|\n");
  for (int round = 0; round < args.rounds; ++round) {
    double daemon_seconds = 0, engine_seconds = 0;
    for (int leg = 0; leg < 2; ++leg) {
      if ((leg == 0) == (round % 2 == 0)) {
        HttpClientReply reply;
        std::string error;
        const double begin = bench::WallSeconds();
        if (!client.Send("POST", "/v1/fits", body, {{"Prefer", "wait=30"}}, &reply, &error)) {
          std::printf("POST failed: %s\n", error.c_str());
          return false;
        }
        daemon_seconds = bench::WallSeconds() - begin;
        const Json job = Json::parse(reply.body, nullptr, false);
        if (reply.status != 200 || !job.is_object() || job.value("state", "") != "done") {
          std::printf("POST answered %d, not a done job: %.200s\n", reply.status,
                      reply.body.c_str());
          return false;
        }
        out->job_id = job["id"].get<std::string>();
        out->num_starts = job["result"]["search"].value("starts_run", 0);
      } else {
        FitOutcome outcome;
        std::string error;
        const double begin = bench::WallSeconds();
        if (!RunFit(request, &outcome, &error)) {
          std::printf("RunFit failed: %s\n", error.c_str());
          return false;
        }
        engine_seconds = bench::WallSeconds() - begin;
      }
    }
    daemon.push_back(daemon_seconds);
    engine.push_back(engine_seconds);
    ratios.push_back(daemon_seconds / engine_seconds);
    std::printf("| %d | %.2f | %.2f | %.2f | %.1f |\n", round, 1e3 * daemon_seconds,
                1e3 * engine_seconds, ratios.back(), bench::LoadAverage());
  }
  out->daemon_median = bench::Median(daemon);
  out->engine_median = bench::Median(engine);
  out->ratio_median = bench::Median(ratios);
  return true;
}

struct Load {
  double seconds = 0;
  int requests = 0;
  int errors = 0;
  std::vector<double> latencies;
};

// (b): each client thread owns one keep-alive connection and stops after its requests.
Load MeasureLoad(const Args& args, const DaemonUrl& url, const std::string& id) {
  std::vector<Load> per_client(args.clients);
  std::vector<std::thread> threads;
  std::atomic<int> ready{0};
  std::atomic<bool> go{false};
  const std::string target = "/v1/fits/" + id;
  for (int c = 0; c < args.clients; ++c) {
    threads.emplace_back([&, c] {
      HttpClient client(url, "", 30);
      Load& load = per_client[c];
      load.latencies.reserve(args.requests);
      ++ready;
      while (!go) std::this_thread::yield();
      for (int r = 0; r < args.requests; ++r) {
        HttpClientReply reply;
        std::string error;
        const double begin = bench::WallSeconds();
        const bool sent = client.Send("GET", target, "", {}, &reply, &error);
        load.latencies.push_back(bench::WallSeconds() - begin);
        ++load.requests;
        if (!sent || reply.status != 200) ++load.errors;
      }
    });
  }
  while (ready < args.clients) std::this_thread::yield();
  const double begin = bench::WallSeconds();
  go = true;
  for (std::thread& thread : threads) thread.join();
  Load total;
  total.seconds = bench::WallSeconds() - begin;
  for (const Load& load : per_client) {
    total.requests += load.requests;
    total.errors += load.errors;
    total.latencies.insert(total.latencies.end(), load.latencies.begin(), load.latencies.end());
  }
  return total;
}

struct ProgressCost {
  double write_ms = 0;
  int unthrottled_writes = 0;
  int throttled_writes = 0;
};

// (c): a job of its own in a second store file, so the daemon's store is not touched.
bool MeasureProgressWrites(const std::string& dir, int num_starts, double fit_seconds,
                           ProgressCost* out) {
  std::string error;
  std::unique_ptr<SqliteJobStore> store = SqliteJobStore::Open(dir + "/progress.db", &error);
  std::vector<std::string> ids;
  bool is_full = false;
  JobRecord job;
  bool found = false;
  if (!store ||
      !store->InsertJobs(false, {NewJob{"bench", "{}"}}, 10, nullptr, &ids, &is_full, &error) ||
      !store->ClaimNextJob("bench", &job, &found, &error) || !found) {
    std::printf("progress store: %s\n", error.c_str());
    return false;
  }
  constexpr int kWrites = 101;
  std::vector<double> times;
  for (int k = 0; k < kWrites; ++k) {
    const double begin = bench::WallSeconds();
    store->UpdateProgress(job.id, JobProgress{k, kWrites, 1.0}, &error);
    times.push_back(bench::WallSeconds() - begin);
  }
  out->write_ms = 1e3 * bench::Median(times);
  out->unthrottled_writes = num_starts;
  ProgressThrottle throttle(store.get(), job.id, ProgressThrottle::kDefaultInterval);
  for (int k = 1; k <= num_starts; ++k) {
    std::this_thread::sleep_for(std::chrono::duration<double>(fit_seconds / num_starts));
    throttle.Report(k, num_starts, 1.0);
  }
  throttle.Flush();
  out->throttled_writes = throttle.NumWrites();
  store.reset();
  for (const char* name : {"/progress.db", "/progress.db-wal", "/progress.db-shm"}) {
    std::remove((dir + name).c_str());
  }
  return true;
}

}  // namespace
}  // namespace foothold

int main(int argc, char** argv) {
  using namespace foothold;
  Args args;
  if (!ParseArgs(argc, argv, &args)) {
    std::fprintf(stderr,
                 "usage: foothold_daemon_bench [--rounds N] [--clients N] [--requests N] "
                 "[--workers N] [--foothold PATH]\n");
    return 2;
  }
  Daemon daemon;
  if (!daemon.Start(args)) {
    std::fprintf(stderr, "cannot start %s serve\n", args.foothold.c_str());
    return 1;
  }
  DaemonUrl url{"127.0.0.1", std::to_string(daemon.port)};
  std::printf("daemon: %s serve --workers %d on port %d; %d rounds, load %.1f\n",
              args.foothold.c_str(), args.workers, daemon.port, args.rounds, bench::LoadAverage());
  RoundTrips trips;
  if (!MeasureRoundTrips(args, url, &trips)) return 1;
  std::printf("round trip median %.2f ms, engine-only median %.2f ms, overhead %.2f ms\n",
              1e3 * trips.daemon_median, 1e3 * trips.engine_median,
              1e3 * (trips.daemon_median - trips.engine_median));
  const Load load = MeasureLoad(args, url, trips.job_id);
  std::printf(
      "GET /v1/fits/{id}: %d clients x %d requests in %.2f s: %.0f requests/s, p50 %.2f ms, "
      "p99 %.2f ms, errors %d, load %.1f\n",
      args.clients, args.requests, load.seconds, load.requests / load.seconds,
      1e3 * Percentile(load.latencies, 0.5), 1e3 * Percentile(load.latencies, 0.99), load.errors,
      bench::LoadAverage());
  ProgressCost cost;
  if (!MeasureProgressWrites(daemon.dir, trips.num_starts, trips.engine_median, &cost)) return 1;
  std::printf(
      "progress: one write %.2f ms; %d starts: %d writes unthrottled, %d throttled (%.1f ms "
      "saved per job)\n",
      cost.write_ms, trips.num_starts, cost.unthrottled_writes, cost.throttled_writes,
      (cost.unthrottled_writes - cost.throttled_writes) * cost.write_ms);
  std::printf("RATIO daemon roundtrip_over_engine %.4f\n", trips.ratio_median);
  return load.errors == 0 ? 0 : 1;
}
