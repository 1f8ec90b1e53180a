#include "server/cli.h"

#include "server/client_command.h"
#include "server/compare_command.h"
#include "server/demo_command.h"
#include "server/fit_flags.h"
#include "server/fit_service.h"
#include "server/guess_command.h"
#include "server/json_codec.h"
#include "server/serve_command.h"
#include "server/text_report.h"

namespace foothold {
namespace {

constexpr const char* kUsage = R"TEXT(usage: foothold COMMAND [ARGS]

Fits curves to measured data: a catalogue family or your own expression.

commands:
  fit DATA ...      fit one dataset locally and print the result (foothold fit --help)
  guess DATA ...    list the starting guesses a fit would use, no fit (foothold guess --help)
  compare DATA ...  fit several families and rank them by AICc (foothold compare --help)
  serve             run the HTTP daemon (foothold serve --help)
  submit DATA ...   send a fit to a daemon and print its job id (foothold submit --help)
  status ID         one line on a daemon's job: state, progress (foothold status --help)
  wait ID           wait until a daemon's job has finished (foothold wait --help)
  result ID         print a daemon's finished job as fit does (foothold result --help)
  demo              fit the demo datasets through a temporary daemon (foothold demo --help)
  families          list the model catalogue: name, parameters, formula (--json for JSON)
  help              this text

options:
  --help, -h        this text
  --version         the version

The client commands find the daemon at --url or $FOOTHOLD_URL (default
http://127.0.0.1:8470).

Exit status: 0 success, 1 the output could not be written, 2 bad input, a daemon error or
no daemon (one line on stderr), 3 a fit did not converge, 4 a job has not finished in
time, 5 a job failed or was cancelled.
)TEXT";

constexpr const char* kFamiliesUsage = R"TEXT(usage: foothold families [--json]

Lists the model catalogue: each family's name (with the options it takes), its parameters
in order, and its formula. --json prints the catalogue with parameter meanings and default
bounds.
)TEXT";

int BadInput(const std::string& message, std::ostream& err) {
  err << "foothold: " << message << '\n';
  return kExitBadInput;
}

// A result that never reached its reader is a failure, not a success with exit 0.
int CheckWritten(int code, std::ostream& out, std::ostream& err) {
  out.flush();
  if (out) return code;
  err << "foothold: writing the result failed\n";
  return kExitOutputFailed;
}

int RunFamilies(const std::vector<std::string>& args, std::ostream& out, std::ostream& err) {
  bool json = false;
  for (const std::string& arg : args) {
    if (arg == "--json") {
      json = true;
    } else if (arg == "--help" || arg == "-h") {
      out << kFamiliesUsage;
      return kExitOk;
    } else {
      return BadInput("families: unexpected argument '" + arg + "' (see foothold families --help)",
                      err);
    }
  }
  if (json) {
    out << EncodeFamilies().dump(2) << '\n';
  } else {
    WriteFamiliesTable(out);
  }
  return CheckWritten(kExitOk, out, err);
}

int RunFitCommand(const std::vector<std::string>& args, std::ostream& out, std::ostream& err) {
  FitCommand command;
  std::string error;
  if (!ParseFitArguments(args, &command, &error)) return BadInput(error, err);
  if (command.help) {
    out << FitUsage();
    return kExitOk;
  }
  if (!command.request.compare.empty()) {
    // A request document may carry "compare" (a daemon job option); fit runs one model.
    return BadInput(
        "compare: fit runs one model; use foothold compare DATA --families ... or submit the "
        "request to a daemon (foothold submit, POST /v1/fits)",
        err);
  }
  FitOutcome outcome;
  if (!RunFit(command.request, &outcome, &error)) return BadInput(error, err);
  if (command.json) {
    out << EncodeFitOutcome(outcome).dump(2) << '\n';
  } else {
    WriteFitReport(outcome, command.data_source, out);
  }
  return CheckWritten(outcome.IsConverged() ? kExitOk : kExitNotConverged, out, err);
}

}  // namespace

int RunCli(const std::vector<std::string>& args, std::ostream& out, std::ostream& err) {
  if (args.empty()) return BadInput("no command given (see foothold --help)", err);
  const std::string& command = args[0];
  const std::vector<std::string> rest(args.begin() + 1, args.end());
  if (command == "--help" || command == "-h" || command == "help") {
    out << kUsage;
    return kExitOk;
  }
  if (command == "--version") {
    out << "foothold 0.1.0\n";
    return kExitOk;
  }
  if (command == "fit") return RunFitCommand(rest, out, err);
  if (command == "compare") return RunCompare(rest, out, err);
  if (command == "guess") return RunGuessCommand(rest, out, err);
  if (command == "families") return RunFamilies(rest, out, err);
  if (command == "serve") return RunServe(rest, out, err);
  if (command == "demo") return RunDemo(rest, out, err);
  if (command == "submit") return RunSubmit(rest, out, err);
  if (command == "status") return RunStatus(rest, out, err);
  if (command == "wait") return RunWait(rest, out, err);
  if (command == "result") return RunResult(rest, out, err);
  return BadInput("unknown command '" + command +
                      "' (commands: fit, guess, compare, families, serve, demo, submit, status, "
                      "wait, result; see foothold --help)",
                  err);
}

}  // namespace foothold
