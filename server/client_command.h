#pragma once
// The client commands: `foothold submit`, `status`, `wait` and `result` talk to a running
// daemon over HTTP (docs/cli.md, "Talking to a daemon").

#include <ostream>
#include <string>
#include <vector>

namespace foothold {

// Exit codes beyond those of cli.h: the job has not finished (a --wait or --timeout ran
// out, or `result` asked too early), and the job ended failed or cancelled.
constexpr int kExitNotFinished = 4;
constexpr int kExitJobFailed = 5;

// Where the daemon is when neither --url nor FOOTHOLD_URL says.
constexpr const char* kDefaultDaemonUrl = "http://127.0.0.1:8470";

// `args` are the words after the command name. Daemon errors (problem documents) and
// connection failures are one line on `err` and exit 2.
int RunSubmit(const std::vector<std::string>& args, std::ostream& out, std::ostream& err);
int RunStatus(const std::vector<std::string>& args, std::ostream& out, std::ostream& err);
int RunWait(const std::vector<std::string>& args, std::ostream& out, std::ostream& err);
int RunResult(const std::vector<std::string>& args, std::ostream& out, std::ostream& err);

}  // namespace foothold
