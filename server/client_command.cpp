#include "server/client_command.h"

#include <unistd.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdlib>
#include <fstream>
#include <iostream>
#include <memory>
#include <set>
#include <thread>

#include "server/cli.h"
#include "server/fit_flags.h"
#include "server/http/http_client.h"
#include "server/json_codec.h"
#include "server/json_codec_outcome.h"
#include "server/text_report.h"

namespace foothold {
namespace {

// `wait` gives up after this long unless --timeout says otherwise.
constexpr double kDefaultWaitSeconds = 600;
// Polling starts fast (small fits end in milliseconds) and backs off to one request a
// second, so a long fit costs the daemon little.
constexpr double kFirstPollSeconds = 0.02;
constexpr double kMaxPollSeconds = 1.0;
constexpr double kPollGrowth = 1.5;
// Headroom of a request's own timeout over the time the daemon is asked to hold it.
constexpr double kRequestTimeoutSeconds = 30;

constexpr const char* kSubmitUsage =
    R"TEXT(usage: foothold submit [DATA] (--family NAME | --expr EXPR ...) [fit options]
                       [--url URL] [--token-file FILE] [--label TEXT] [--wait SECONDS] [--json]

Sends a fit to a running daemon (POST /v1/fits) and prints the job id. The fit options are
those of `foothold fit` (foothold fit --help) and build the same request document.

--url URL          the daemon, http://HOST:PORT (default $FOOTHOLD_URL, else http://127.0.0.1:8470)
--token-file FILE  bearer token: the file's first line that is not blank or a '#' comment
                   (default $FOOTHOLD_TOKEN_FILE; none when neither is set)
--wait SECONDS     wait up to SECONDS for the fit and print its result instead of the id
--json             with --wait: print the result document instead of the report

Exit status: 0 submitted (with --wait: fitted), 2 bad input, a daemon error or no daemon,
3 (--wait) the fit did not converge, 4 (--wait) not finished in time (the id is printed),
5 (--wait) the job failed or was cancelled.
)TEXT";

constexpr const char* kStatusUsage =
    R"TEXT(usage: foothold status ID [--json] [--url URL] [--token-file FILE]

Prints one line for a job: id, state, starts finished of planned, best rss so far, label.
--json prints the job document (GET /v1/fits/ID). Exit status 0, or 2 on a daemon error
(an unknown id, for instance) or no daemon.
)TEXT";

constexpr const char* kWaitUsage =
    R"TEXT(usage: foothold wait ID [--timeout SECONDS] [--json] [--url URL] [--token-file FILE]

Polls a job until it is done, failed or cancelled (every 20 ms at first, backing off to
once a second) and prints its status line (--json: the job document). Progress goes to
stderr when it is a terminal. --timeout defaults to 600 seconds.

Exit status: 0 done and converged, 2 a daemon error or no daemon, 3 done but not converged,
4 the timeout ran out first, 5 failed or cancelled.
)TEXT";

constexpr const char* kResultUsage =
    R"TEXT(usage: foothold result ID [--json] [--url URL] [--token-file FILE]

Prints a finished job's result: the same report as `foothold fit`, or with --json the
result document.

Exit status: 0 converged, 2 a daemon error or no daemon, 3 not converged (still printed),
4 the job has not finished yet, 5 failed or cancelled (a cancelled job's partial result is
printed).
)TEXT";

struct ClientFlags {
  std::string url;
  std::string token_file;
  double wait_seconds = -1;  // submit --wait; negative: do not wait
  double timeout_seconds = kDefaultWaitSeconds;
  bool json = false;
  bool help = false;
};

int Fail(const std::string& command, const std::string& message, std::ostream& err) {
  err << "foothold: " << command << ": " << message << '\n';
  return kExitBadInput;
}

std::string EnvOr(const char* name, const std::string& fallback) {
  const char* value = std::getenv(name);
  return value && *value ? std::string(value) : fallback;
}

bool ParseSeconds(const std::string& flag, const std::string& text, double* value,
                  std::string* error) {
  char* end = nullptr;
  const double parsed = std::strtod(text.c_str(), &end);
  if (text.empty() || *end != '\0' || !std::isfinite(parsed) || parsed < 0) {
    *error = flag + " '" + text + "': expected a number of seconds >= 0";
    return false;
  }
  *value = parsed;
  return true;
}

// Takes the client's own flags out of `args` (`value_flags` take a value, `switches` none)
// and leaves the others, in order, in `rest`.
bool ExtractFlags(const std::vector<std::string>& args, const std::set<std::string>& value_flags,
                  const std::set<std::string>& switches, ClientFlags* flags,
                  std::vector<std::string>* rest, std::string* error) {
  flags->url = EnvOr("FOOTHOLD_URL", kDefaultDaemonUrl);
  flags->token_file = EnvOr("FOOTHOLD_TOKEN_FILE", "");
  for (size_t k = 0; k < args.size(); ++k) {
    std::string flag = args[k];
    std::string value;
    const size_t equals = flag.find('=');
    bool has_value = false;
    if (flag.rfind("--", 0) == 0 && equals != std::string::npos) {
      value = flag.substr(equals + 1);
      flag = flag.substr(0, equals);
      has_value = true;
    }
    if (switches.count(flag) && !has_value) {
      if (flag == "--json") flags->json = true;
      if (flag == "--help" || flag == "-h") flags->help = true;
      continue;
    }
    if (!value_flags.count(flag)) {
      rest->push_back(args[k]);
      continue;
    }
    if (!has_value) {
      if (k + 1 >= args.size()) {
        *error = flag + ": missing value";
        return false;
      }
      value = args[++k];
    }
    if (flag == "--url") {
      flags->url = value;
    } else if (flag == "--token-file") {
      flags->token_file = value;
    } else if (flag == "--wait") {
      if (!ParseSeconds(flag, value, &flags->wait_seconds, error)) return false;
    } else if (flag == "--timeout") {
      if (!ParseSeconds(flag, value, &flags->timeout_seconds, error)) return false;
    }
  }
  return true;
}

// The first line of the file that is neither blank nor a '#' comment, trimmed.
bool ReadToken(const std::string& path, std::string* token, std::string* error) {
  std::ifstream in(path);
  if (!in) {
    *error = "--token-file '" + path + "': cannot be read";
    return false;
  }
  std::string line;
  while (std::getline(in, line)) {
    const size_t begin = line.find_first_not_of(" \t\r");
    if (begin == std::string::npos || line[begin] == '#') continue;
    *token = line.substr(begin, line.find_last_not_of(" \t\r") - begin + 1);
    return true;
  }
  *error = "--token-file '" + path + "': no token in it (one a line, '#' starts a comment)";
  return false;
}

std::unique_ptr<HttpClient> MakeClient(const ClientFlags& flags, double hold_seconds,
                                       std::string* error) {
  DaemonUrl url;
  if (!DaemonUrl::Parse(flags.url, &url, error)) return nullptr;
  std::string token;
  if (!flags.token_file.empty() && !ReadToken(flags.token_file, &token, error)) return nullptr;
  return std::make_unique<HttpClient>(url, token, hold_seconds + kRequestTimeoutSeconds);
}

// A daemon error as one line: its problem detail, the status and, for 429, when to retry.
int DaemonError(const std::string& command, const HttpClientReply& reply, std::ostream& err) {
  const Json problem = Json::parse(reply.body, nullptr, false);
  std::string detail;
  if (problem.is_object() && problem.contains("detail") && problem["detail"].is_string()) {
    detail = problem["detail"].get<std::string>();
  } else {
    detail = reply.body.substr(0, 200);
  }
  std::string line = detail + " (HTTP " + std::to_string(reply.status);
  if (problem.is_object() && problem.contains("title") && problem["title"].is_string()) {
    line += " " + problem["title"].get<std::string>();
  }
  if (!reply.retry_after.empty()) line += "; retry after " + reply.retry_after + " s";
  return Fail(command, line + ")", err);
}

// A job id as the daemon prints it; anything else would change the request's path.
bool CheckId(const std::string& id, std::string* error) {
  const bool plain = !id.empty() && std::all_of(id.begin(), id.end(), [](char c) {
    return std::isalnum(static_cast<unsigned char>(c)) || c == '-' || c == '_';
  });
  if (!plain) *error = "ID '" + id + "': expected a job id as `foothold submit` prints it";
  return plain;
}

// Reads the one ID a command takes from what ExtractFlags left.
bool TakeId(const std::vector<std::string>& rest, std::string* id, std::string* error) {
  if (rest.empty()) {
    *error = "missing the job ID";
    return false;
  }
  if (rest.size() > 1 || rest[0].rfind("-", 0) == 0) {
    *error = "unexpected argument '" + (rest.size() > 1 ? rest[1] : rest[0]) + "'";
    return false;
  }
  *id = rest[0];
  return CheckId(*id, error);
}

std::string State(const Json& job) { return job.value("state", std::string()); }

bool IsFinishedState(const std::string& state) {
  return state == "done" || state == "failed" || state == "cancelled";
}

std::string StatusLine(const Json& job) {
  std::string line = job.value("id", std::string()) + "  " + State(job);
  const Json progress = job.value("progress", Json::object());
  line += "  " + std::to_string(progress.value("starts_finished", 0)) + "/" +
          std::to_string(progress.value("starts_planned", 0)) + " starts";
  if (progress.contains("best_rss") && progress["best_rss"].is_number()) {
    line += "  best rss " + FormatSignificant(progress["best_rss"].get<double>(), 6);
  }
  const std::string label = job.value("label", std::string());
  if (!label.empty()) line += "  label " + label;
  if (job.contains("error") && job["error"].is_string()) {
    line += "  error: " + job["error"].get<std::string>();
  }
  return line;
}

// 0 converged, 3 not converged, 5 failed or cancelled: the exit of a finished job.
int FinishedExit(const Json& job) {
  const std::string state = State(job);
  if (state != "done") return kExitJobFailed;
  const Json& result = job.contains("result") ? job["result"] : Json::object();
  const bool converged =
      result.is_object() && result.contains("best") && result["best"].value("converged", false);
  return converged ? kExitOk : kExitNotConverged;
}

// GET /v1/fits/ID into `job`; a daemon error or no answer is reported and returns false.
bool FetchJob(const std::string& command, HttpClient* client, const std::string& id, Json* job,
              int* exit_code, std::ostream& err) {
  HttpClientReply reply;
  std::string error;
  if (!client->Send("GET", "/v1/fits/" + id, "", {}, &reply, &error)) {
    *exit_code = Fail(command, error, err);
    return false;
  }
  if (reply.status != 200) {
    *exit_code = DaemonError(command, reply, err);
    return false;
  }
  *job = Json::parse(reply.body, nullptr, false);
  if (!job->is_object()) {
    *exit_code = Fail(command, "the daemon's answer for '" + id + "' is not a JSON object", err);
    return false;
  }
  return true;
}

// Polls until the job is finished or `timeout_seconds` ran out; *job is the last answer.
bool PollJob(const std::string& command, HttpClient* client, const std::string& id,
             double timeout_seconds, Json* job, int* exit_code, std::ostream& err) {
  using Clock = std::chrono::steady_clock;
  const auto until = Clock::now() + std::chrono::duration_cast<Clock::duration>(
                                        std::chrono::duration<double>(timeout_seconds));
  const bool show_progress = &err == &std::cerr && isatty(STDERR_FILENO);
  double pause = kFirstPollSeconds;
  while (true) {
    if (!FetchJob(command, client, id, job, exit_code, err)) return false;
    if (IsFinishedState(State(*job))) break;
    if (show_progress) err << '\r' << StatusLine(*job) << "\x1b[K" << std::flush;
    const auto now = Clock::now();
    if (now >= until) break;
    const auto left = std::chrono::duration<double>(until - now).count();
    std::this_thread::sleep_for(std::chrono::duration<double>(std::min(pause, left)));
    pause = std::min(pause * kPollGrowth, kMaxPollSeconds);
  }
  if (show_progress) err << "\r\x1b[K" << std::flush;
  return true;
}

// The result of a finished job: the report (or the document with `json`) and its exit.
int PrintResult(const std::string& command, const Json& job, bool json, std::ostream& out,
                std::ostream& err) {
  const std::string id = job.value("id", std::string());
  const std::string state = State(job);
  if (!job.contains("result") || !job["result"].is_object()) {
    const std::string why = job.value("error", std::string("no result stored"));
    err << "foothold: " << command << ": job " << id << " " << state << ": " << why << '\n';
    return kExitJobFailed;
  }
  if (state == "cancelled") {
    err << "foothold: " << command << ": job " << id
        << " was cancelled; the result covers the starts that finished\n";
  }
  if (json) {
    out << job["result"].dump(2) << '\n';
  } else {
    FitOutcome outcome;
    std::string error;
    if (!DecodeFitOutcome(job["result"], &outcome, &error)) return Fail(command, error, err);
    WriteFitReport(outcome, "job " + id, out);
  }
  out.flush();
  if (!out) {
    err << "foothold: writing the result failed\n";
    return kExitOutputFailed;
  }
  return FinishedExit(job);
}

int NotFinished(const std::string& command, const Json& job, double seconds, std::ostream& err) {
  const std::string id = job.value("id", std::string());
  err << "foothold: " << command << ": job " << id << " is " << State(job);
  if (seconds >= 0) err << " after " << FormatSignificant(seconds, 3) << " s";
  err << " (foothold wait " << id << ")\n";
  return kExitNotFinished;
}

int SubmitCommand(const std::vector<std::string>& args, std::ostream& out, std::ostream& err) {
  const std::string kCommand = "submit";
  ClientFlags flags;
  std::vector<std::string> rest;
  std::string error;
  if (!ExtractFlags(args, {"--url", "--token-file", "--wait"}, {"--help", "-h"}, &flags, &rest,
                    &error)) {
    return Fail(kCommand, error, err);
  }
  if (flags.help) {
    out << kSubmitUsage;
    return kExitOk;
  }
  FitCommand command;
  if (!ParseFitArguments(rest, &command, &error)) return Fail(kCommand, error, err);
  if (command.help) {
    out << kSubmitUsage;
    return kExitOk;
  }
  if (!command.request.Validate(&error)) return Fail(kCommand, error, err);
  const double hold = std::max(0.0, flags.wait_seconds);
  std::unique_ptr<HttpClient> client = MakeClient(flags, hold, &error);
  if (!client) return Fail(kCommand, error, err);

  std::vector<std::pair<std::string, std::string>> headers;
  // The daemon holds the answer up to its own limit; the rest of --wait is polled.
  if (flags.wait_seconds > 0) {
    headers.emplace_back("Prefer", "wait=" + std::to_string(static_cast<long>(std::ceil(hold))));
  }
  const auto started = std::chrono::steady_clock::now();
  HttpClientReply reply;
  const std::string body = EncodeFitRequest(command.request).dump();
  if (!client->Send("POST", "/v1/fits", body, headers, &reply, &error)) {
    return Fail(kCommand, error, err);
  }
  if (reply.status != 200 && reply.status != 202) return DaemonError(kCommand, reply, err);
  Json job = Json::parse(reply.body, nullptr, false);
  if (!job.is_object() || !job.contains("id") || !job["id"].is_string()) {
    return Fail(kCommand, "the daemon's answer has no job id", err);
  }
  const std::string id = job["id"].get<std::string>();
  if (flags.wait_seconds < 0) {
    out << id << '\n';
    out.flush();
    return out ? kExitOk : kExitOutputFailed;
  }
  const double spent =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
  int exit_code = kExitOk;
  if (!IsFinishedState(State(job)) &&
      !PollJob(kCommand, client.get(), id, std::max(0.0, hold - spent), &job, &exit_code, err)) {
    return exit_code;
  }
  if (!IsFinishedState(State(job))) {
    out << id << '\n';
    return NotFinished(kCommand, job, hold, err);
  }
  return PrintResult(kCommand, job, command.json, out, err);
}

// The front shared by status, wait and result: flags, --help, the job id and a client.
// False when the command ends here, with *exit_code saying how.
bool StartIdCommand(const std::string& command, const std::vector<std::string>& args,
                    const std::set<std::string>& value_flags, const char* usage, ClientFlags* flags,
                    std::string* id, std::unique_ptr<HttpClient>* client, std::ostream& out,
                    std::ostream& err, int* exit_code) {
  std::vector<std::string> rest;
  std::string error;
  if (!ExtractFlags(args, value_flags, {"--json", "--help", "-h"}, flags, &rest, &error)) {
    *exit_code = Fail(command, error, err);
    return false;
  }
  if (flags->help) {
    out << usage;
    *exit_code = kExitOk;
    return false;
  }
  if (!TakeId(rest, id, &error)) {
    *exit_code = Fail(command, error + " (see foothold " + command + " --help)", err);
    return false;
  }
  *client = MakeClient(*flags, 0, &error);
  if (!*client) {
    *exit_code = Fail(command, error, err);
    return false;
  }
  return true;
}

int StatusCommand(const std::vector<std::string>& args, std::ostream& out, std::ostream& err) {
  const std::string kCommand = "status";
  ClientFlags flags;
  std::string id;
  std::unique_ptr<HttpClient> client;
  int exit_code = kExitOk;
  if (!StartIdCommand(kCommand, args, {"--url", "--token-file"}, kStatusUsage, &flags, &id, &client,
                      out, err, &exit_code)) {
    return exit_code;
  }
  Json job;
  if (!FetchJob(kCommand, client.get(), id, &job, &exit_code, err)) return exit_code;
  out << (flags.json ? job.dump(2) : StatusLine(job)) << '\n';
  out.flush();
  return out ? kExitOk : kExitOutputFailed;
}

int WaitCommand(const std::vector<std::string>& args, std::ostream& out, std::ostream& err) {
  const std::string kCommand = "wait";
  ClientFlags flags;
  std::string id;
  std::unique_ptr<HttpClient> client;
  int exit_code = kExitOk;
  if (!StartIdCommand(kCommand, args, {"--url", "--token-file", "--timeout"}, kWaitUsage, &flags,
                      &id, &client, out, err, &exit_code)) {
    return exit_code;
  }
  Json job;
  if (!PollJob(kCommand, client.get(), id, flags.timeout_seconds, &job, &exit_code, err)) {
    return exit_code;
  }
  out << (flags.json ? job.dump(2) : StatusLine(job)) << '\n';
  out.flush();
  if (!out) return kExitOutputFailed;
  if (!IsFinishedState(State(job))) return NotFinished(kCommand, job, flags.timeout_seconds, err);
  return FinishedExit(job);
}

int ResultCommand(const std::vector<std::string>& args, std::ostream& out, std::ostream& err) {
  const std::string kCommand = "result";
  ClientFlags flags;
  std::string id;
  std::unique_ptr<HttpClient> client;
  int exit_code = kExitOk;
  if (!StartIdCommand(kCommand, args, {"--url", "--token-file"}, kResultUsage, &flags, &id, &client,
                      out, err, &exit_code)) {
    return exit_code;
  }
  Json job;
  if (!FetchJob(kCommand, client.get(), id, &job, &exit_code, err)) return exit_code;
  if (!IsFinishedState(State(job))) return NotFinished(kCommand, job, -1, err);
  return PrintResult(kCommand, job, flags.json, out, err);
}

// A daemon of another version may answer with a document of another shape: a wrong type
// is reported as such, never an abort.
int Guarded(const char* command,
            int (*run)(const std::vector<std::string>&, std::ostream&, std::ostream&),
            const std::vector<std::string>& args, std::ostream& out, std::ostream& err) {
  try {
    return run(args, out, err);
  } catch (const nlohmann::json::exception& error) {
    return Fail(command, std::string("unexpected answer from the daemon: ") + error.what(), err);
  }
}

}  // namespace

int RunSubmit(const std::vector<std::string>& args, std::ostream& out, std::ostream& err) {
  return Guarded("submit", SubmitCommand, args, out, err);
}

int RunStatus(const std::vector<std::string>& args, std::ostream& out, std::ostream& err) {
  return Guarded("status", StatusCommand, args, out, err);
}

int RunWait(const std::vector<std::string>& args, std::ostream& out, std::ostream& err) {
  return Guarded("wait", WaitCommand, args, out, err);
}

int RunResult(const std::vector<std::string>& args, std::ostream& out, std::ostream& err) {
  return Guarded("result", ResultCommand, args, out, err);
}

}  // namespace foothold
