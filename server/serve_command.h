#pragma once
// `foothold serve`: the daemon's flags (each with an environment twin, flags win) and the
// run loop: open the store, recover, start workers and the HTTP server, wait for a signal,
// shut down gracefully.

#include <iosfwd>
#include <string>
#include <vector>

#include "server/http/request_log.h"
#include "server/http/service_limits.h"

namespace foothold {

struct ServeOptions {
  std::string listen = "127.0.0.1";
  int port = 8470;
  std::string store = "./foothold.db";
  int workers = 0;  // 0: hardware threads
  int io_threads = 2;
  std::string token_file;
  LogFormat log_format = LogFormat::kText;
  double retain_days = 0;  // 0 keeps finished jobs for ever
  double shutdown_grace_seconds = 30;
  bool auth_health = false;  // true: /healthz, /readyz, /metrics need a token too
  ServiceLimits limits;
  bool help = false;
};

// Reads the environment twins, then the flags; false with a message naming the flag.
bool ParseServeArguments(const std::vector<std::string>& args, ServeOptions* out,
                         std::string* error);
std::string ServeUsage();

// Runs until SIGTERM or SIGINT; returns the exit status (0 after a clean shutdown, 2 on
// bad configuration).
int RunServe(const std::vector<std::string>& args, std::ostream& out, std::ostream& err);

}  // namespace foothold
