// Flags and environment twins of `foothold serve`.
#include <cstdlib>
#include <functional>
#include <sstream>

#include "server/serve_command.h"

namespace foothold {
namespace {

struct Flag {
  const char* name;  // without the leading "--"
  const char* help;
  std::function<std::string(const ServeOptions&)> show_default;
  std::function<bool(const std::string&, ServeOptions*)> set;
};

bool ToInt(const std::string& text, int low, int high, int* value) {
  char* end = nullptr;
  const long parsed = std::strtol(text.c_str(), &end, 10);
  if (text.empty() || *end != '\0' || parsed < low || parsed > high) return false;
  *value = static_cast<int>(parsed);
  return true;
}

bool ToDouble(const std::string& text, double low, double* value) {
  char* end = nullptr;
  const double parsed = std::strtod(text.c_str(), &end);
  if (text.empty() || *end != '\0' || !(parsed >= low) || parsed > 1e12) return false;
  *value = parsed;
  return true;
}

std::string Show(double value) {
  std::ostringstream out;
  out << value;
  return out.str();
}

#define INT_FLAG(NAME, FIELD, LOW, HIGH, HELP)                                               \
  Flag {                                                                                     \
    NAME, HELP, [](const ServeOptions& o) { return std::to_string(o.FIELD); },               \
        [](const std::string& v, ServeOptions* o) { return ToInt(v, LOW, HIGH, &o->FIELD); } \
  }
#define DOUBLE_FLAG(NAME, FIELD, LOW, HELP)                                               \
  Flag {                                                                                  \
    NAME, HELP, [](const ServeOptions& o) { return Show(o.FIELD); },                      \
        [](const std::string& v, ServeOptions* o) { return ToDouble(v, LOW, &o->FIELD); } \
  }

const std::vector<Flag>& Flags() {
  static const std::vector<Flag> kFlags = {
      {"listen", "address to listen on", [](const ServeOptions& o) { return o.listen; },
       [](const std::string& v, ServeOptions* o) {
         o->listen = v;
         return !v.empty();
       }},
      INT_FLAG("port", port, 0, 65535, "TCP port; 0 picks a free one (printed at startup)"),
      {"store", "SQLite job store file (created when missing)",
       [](const ServeOptions& o) { return o.store; },
       [](const std::string& v, ServeOptions* o) {
         o->store = v;
         return !v.empty();
       }},
      INT_FLAG("workers", workers, 0, 1024, "fit worker threads; 0 means hardware threads"),
      INT_FLAG("io-threads", io_threads, 1, 64, "HTTP I/O threads"),
      {"token-file", "bearer tokens, one a line ('#' comments); empty: no authentication",
       [](const ServeOptions& o) { return o.token_file; },
       [](const std::string& v, ServeOptions* o) {
         o->token_file = v;
         return true;
       }},
      {"log-format", "text or json (one JSON object a line)",
       [](const ServeOptions& o) { return o.log_format == LogFormat::kJson ? "json" : "text"; },
       [](const std::string& v, ServeOptions* o) {
         if (v != "text" && v != "json") return false;
         o->log_format = v == "json" ? LogFormat::kJson : LogFormat::kText;
         return true;
       }},
      DOUBLE_FLAG("retain-days", retain_days, 0,
                  "purge finished jobs older than this (at startup and hourly); 0 keeps all"),
      DOUBLE_FLAG("shutdown-grace-seconds", shutdown_grace_seconds, 0,
                  "on SIGTERM/SIGINT, running jobs may finish this long; the rest stay queued"),
      {"auth-health", "true: /healthz, /readyz and /metrics need a token too",
       [](const ServeOptions& o) { return o.auth_health ? "true" : "false"; },
       [](const std::string& v, ServeOptions* o) {
         if (v != "true" && v != "false") return false;
         o->auth_health = v == "true";
         return true;
       }},
      {"max-body-bytes", "largest request body in bytes (413 above)",
       [](const ServeOptions& o) { return std::to_string(o.limits.max_body_bytes); },
       [](const std::string& v, ServeOptions* o) {
         int value = 0;
         if (!ToInt(v, 1, 1 << 30, &value)) return false;
         o->limits.max_body_bytes = value;
         return true;
       }},
      INT_FLAG("max-points", limits.max_points, 1, 100000000, "most rows in one dataset (422)"),
      INT_FLAG("max-starts", limits.max_starts, 1, 100000, "most starts one job may ask (422)"),
      INT_FLAG("max-parameters", limits.max_parameters, 1, 10000, "most model parameters (422)"),
      INT_FLAG("max-expression-length", limits.max_expression_length, 1, 1 << 20,
               "longest expression in characters (422)"),
      DOUBLE_FLAG("max-job-seconds", limits.max_job_seconds, 0.001,
                  "every job's deadline is cut to this"),
      INT_FLAG("max-batch-jobs", limits.max_batch_jobs, 1, 1000000, "most datasets a batch (422)"),
      INT_FLAG("max-queue", limits.max_queue, 1, 100000000, "most queued jobs (429 beyond)"),
      INT_FLAG("retry-after-seconds", limits.retry_after_seconds, 1, 86400,
               "Retry-After sent with 429"),
      DOUBLE_FLAG("max-wait-seconds", limits.max_wait_seconds, 0.001,
                  "longest Prefer: wait=N honoured"),
      DOUBLE_FLAG("header-timeout-seconds", limits.header_timeout_seconds, 0.001,
                  "request line and headers must arrive within this (also keep-alive idle)"),
      DOUBLE_FLAG("body-timeout-seconds", limits.body_timeout_seconds, 0.001,
                  "the body must arrive within this after the headers"),
      INT_FLAG("max-connections", limits.max_connections, 1, 100000,
               "open connections at most (503 beyond)"),
      INT_FLAG("max-header-bytes", limits.max_header_bytes, 256, 1 << 20,
               "largest header block (431 above)"),
  };
  return kFlags;
}

std::string EnvName(const char* flag) {
  std::string name = "FOOTHOLD_";
  for (const char* c = flag; *c; ++c) name += *c == '-' ? '_' : static_cast<char>(std::toupper(*c));
  return name;
}

const Flag* FindFlag(const std::string& name) {
  for (const Flag& flag : Flags()) {
    if (name == flag.name) return &flag;
  }
  return nullptr;
}

}  // namespace

bool ParseServeArguments(const std::vector<std::string>& args, ServeOptions* out,
                         std::string* error) {
  ServeOptions options;
  for (const Flag& flag : Flags()) {
    const char* value = std::getenv(EnvName(flag.name).c_str());
    if (value && !flag.set(value, &options)) {
      *error = EnvName(flag.name) + " = '" + value + "': invalid value for --" + flag.name +
               " (see foothold serve --help)";
      return false;
    }
  }
  for (size_t i = 0; i < args.size(); ++i) {
    const std::string& arg = args[i];
    if (arg == "--help" || arg == "-h") {
      options.help = true;
      continue;
    }
    if (arg.rfind("--", 0) != 0) {
      *error = "serve: unexpected argument '" + arg + "' (see foothold serve --help)";
      return false;
    }
    std::string name = arg.substr(2);
    std::string value;
    const size_t equals = name.find('=');
    if (equals != std::string::npos) {
      value = name.substr(equals + 1);
      name = name.substr(0, equals);
    } else if (i + 1 < args.size()) {
      value = args[++i];
    } else {
      *error = "--" + name + ": needs a value";
      return false;
    }
    const Flag* flag = FindFlag(name);
    if (!flag) {
      *error = "serve: unknown flag '--" + name + "' (see foothold serve --help)";
      return false;
    }
    if (!flag->set(value, &options)) {
      *error = "--" + name + " = '" + value + "': invalid value (" + flag->help + ")";
      return false;
    }
  }
  if (!options.limits.Validate(error)) return false;
  *out = options;
  return true;
}

std::string ServeUsage() {
  std::ostringstream out;
  const ServeOptions defaults;
  out << "usage: foothold serve [--FLAG VALUE ...]\n\n"
         "Runs the fitting daemon: HTTP/JSON API (docs/api.md), durable jobs in SQLite, fit\n"
         "workers. Every flag has an environment twin (FOOTHOLD_ and the name in capitals,\n"
         "dashes as underscores, e.g. FOOTHOLD_PORT); a flag wins over its twin.\n\n";
  for (const Flag& flag : Flags()) {
    out << "  --" << flag.name << " (" << EnvName(flag.name) << ", default '"
        << flag.show_default(defaults) << "')\n      " << flag.help << '\n';
  }
  out << "\nPrints 'foothold: listening on http://ADDRESS:PORT' once ready. SIGTERM or SIGINT:\n"
         "stop accepting, let running jobs finish within the grace period, requeue the rest,\n"
         "exit 0.\n";
  return out.str();
}

}  // namespace foothold
