#pragma once
// Every resource limit of the daemon, each a named option with its default. serve_command
// maps each to a flag and an environment variable.

#include <string>

namespace foothold {

struct ServiceLimits {
  // Largest request body in bytes (413 above). Default 8 MiB.
  long long max_body_bytes = 8ll << 20;
  // Most rows in one dataset (422 above). Default 100000.
  int max_points = 100000;
  // Most starts one job may ask for (422 above). Default 1024.
  int max_starts = 1024;
  // Most parameters of one model (422 above). Default 64.
  int max_parameters = 64;
  // Longest expression in characters (422 above). Default 4096.
  int max_expression_length = 4096;
  // Every job's deadline is cut to this many seconds. Default 300.
  double max_job_seconds = 300;
  // Most datasets in one batch (422 above). Default 1000.
  int max_batch_jobs = 1000;
  // Most queued jobs; a submission beyond gets 429 with Retry-After. Default 10000.
  int max_queue = 10000;
  // Retry-After seconds sent with 429. Default 5.
  int retry_after_seconds = 5;
  // Longest Prefer: wait=N the server honours, in seconds. Default 60.
  double max_wait_seconds = 60;
  // The request line and headers must arrive within this many seconds; this also bounds
  // how long an idle keep-alive connection stays open. Default 10.
  double header_timeout_seconds = 10;
  // The body must arrive within this many seconds after the headers. Default 60.
  double body_timeout_seconds = 60;
  // Open connections at most; more are answered 503 and closed. Default 256.
  int max_connections = 256;
  // Largest header block in bytes (431 above). Default 16 KiB.
  int max_header_bytes = 16 << 10;

  // Names the field, its value and the rule on the first violation.
  bool Validate(std::string* error) const;
};

}  // namespace foothold
