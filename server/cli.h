#pragma once
// The `foothold` command line, callable in-process so tests can run it.

#include <ostream>
#include <string>
#include <vector>

namespace foothold {

// Exit codes of every subcommand.
constexpr int kExitOk = 0;
constexpr int kExitOutputFailed = 1;  // the result could not be written (closed pipe, full disk)
constexpr int kExitBadInput = 2;
constexpr int kExitNotConverged = 3;

// `args` are the words after the program name, e.g. {"fit", "data.csv", "--family", "line"}.
// Results go to `out`; a bad input writes exactly one line "foothold: <what is wrong>" to
// `err` and returns kExitBadInput.
int RunCli(const std::vector<std::string>& args, std::ostream& out, std::ostream& err);

}  // namespace foothold
