#include "server/serve_command.h"

#include <atomic>
#include <boost/asio/io_context.hpp>
#include <boost/asio/signal_set.hpp>
#include <boost/asio/steady_timer.hpp>
#include <chrono>
#include <iostream>
#include <thread>

#include "engine/multistart/multistart_options.h"
#include "server/http/auth.h"
#include "server/http/http_server.h"
#include "server/http/metrics.h"
#include "server/http/request_log.h"
#include "server/http/router.h"
#include "server/jobs/sqlite_job_store.h"
#include "server/jobs/worker_pool.h"

namespace foothold {
namespace {

constexpr int kExitServeOk = 0;
constexpr int kExitServeConfig = 2;
constexpr std::chrono::hours kPurgeInterval{1};
constexpr double kMsPerDay = 86400.0 * 1000.0;

void Purge(JobStore* store, double retain_days, RequestLog* log) {
  if (retain_days <= 0) return;
  int purged = 0;
  std::string error;
  const auto before = NowMs() - static_cast<std::int64_t>(retain_days * kMsPerDay);
  if (!store->PurgeFinishedBefore(before, &purged, &error)) {
    log->Error("purge failed: " + error);
  } else if (purged > 0) {
    log->Info("purged " + std::to_string(purged) + " finished job(s) older than " +
              std::to_string(retain_days) + " day(s)");
  }
}

void SchedulePurge(boost::asio::steady_timer* timer, JobStore* store, double retain_days,
                   RequestLog* log) {
  timer->expires_after(kPurgeInterval);
  timer->async_wait([=](boost::system::error_code error) {
    if (error) return;
    Purge(store, retain_days, log);
    SchedulePurge(timer, store, retain_days, log);
  });
}

}  // namespace

int RunServe(const std::vector<std::string>& args, std::ostream& out, std::ostream& err) {
  ServeOptions options;
  std::string error;
  if (!ParseServeArguments(args, &options, &error)) {
    err << "foothold: " << error << '\n';
    return kExitServeConfig;
  }
  if (options.help) {
    out << ServeUsage();
    return kExitServeOk;
  }
  TokenAuth auth;
  if (!options.token_file.empty() && !auth.LoadFile(options.token_file, &error)) {
    err << "foothold: " << error << '\n';
    return kExitServeConfig;
  }
  RequestLog log(options.log_format);
  std::unique_ptr<SqliteJobStore> store = SqliteJobStore::Open(options.store, &error);
  if (!store) {
    err << "foothold: " << error << '\n';
    return kExitServeConfig;
  }
  int requeued = 0;
  if (!store->RequeueAllRunning(&requeued, &error)) {
    err << "foothold: " << error << '\n';
    return kExitServeConfig;
  }
  if (requeued > 0) log.Info("requeued " + std::to_string(requeued) + " interrupted job(s)");
  Purge(store.get(), options.retain_days, &log);

  Metrics metrics;
  WorkerPoolOptions worker_options;
  worker_options.num_workers =
      options.workers > 0 ? options.workers : MultistartOptions::DefaultNumThreads();
  worker_options.job_deadline_cap_seconds = options.limits.max_job_seconds;
  WorkerPool workers(store.get(), worker_options,
                     [&](const JobRecord& job, double seconds, const std::string& brief) {
                       metrics.ObserveFit(ToString(job.state), seconds);
                       log.Job(job.id, ToString(job.state), seconds, brief);
                     });
  std::atomic<bool> is_shutting_down{false};
  HttpServer* server_pointer = nullptr;
  RouterContext context;
  context.store = store.get();
  context.workers = &workers;
  context.metrics = &metrics;
  context.auth = &auth;
  context.limits = options.limits;
  context.open_health_endpoints = !options.auth_health;
  context.is_shutting_down = [&] { return is_shutting_down.load(); };
  context.open_connections = [&] { return server_pointer ? server_pointer->NumConnections() : 0; };
  Router router(context);
  HttpServerOptions server_options;
  server_options.listen_address = options.listen;
  server_options.port = options.port;
  server_options.num_io_threads = options.io_threads;
  server_options.num_handler_threads = std::max(2, options.io_threads);
  HttpServer server(server_options, &router, options.limits, &metrics, &log);
  server_pointer = &server;
  workers.Start();
  if (!server.Start(&error)) {
    workers.Shutdown(0);
    err << "foothold: " << error << '\n';
    return kExitServeConfig;
  }
  out << "foothold: listening on http://" << server.BoundAddress() << ':' << server.BoundPort()
      << std::endl;
  log.Info("serving on " + server.BoundAddress() + ":" + std::to_string(server.BoundPort()) +
           " with " + std::to_string(worker_options.num_workers) + " worker(s), store " +
           options.store);

  boost::asio::io_context control;
  boost::asio::signal_set signals(control, SIGINT, SIGTERM);
  boost::asio::steady_timer purge_timer(control);
  if (options.retain_days > 0) SchedulePurge(&purge_timer, store.get(), options.retain_days, &log);
  signals.async_wait([&](boost::system::error_code, int signal_number) {
    log.Info("signal " + std::to_string(signal_number) + ": stopping, grace " +
             std::to_string(options.shutdown_grace_seconds) + " s");
    purge_timer.cancel();
  });
  control.run();

  is_shutting_down = true;
  server.StopAccepting();
  workers.Shutdown(options.shutdown_grace_seconds);
  server.Stop();
  std::map<JobState, int> counts;
  store->CountByState(&counts, &error);
  log.Info("stopped; " + std::to_string(counts[JobState::kQueued]) + " job(s) left queued");
  return kExitServeOk;
}

}  // namespace foothold
