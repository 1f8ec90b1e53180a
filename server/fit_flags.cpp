#include "server/fit_flags.h"

#include <cctype>
#include <cmath>
#include <limits>
#include <map>
#include <set>

#include "server/csv_reader.h"
#include "server/data_file.h"
#include "server/json_codec.h"

namespace foothold {
namespace {

constexpr double kInfinity = std::numeric_limits<double>::infinity();

const std::set<std::string>& ValueFlags() {
  static const std::set<std::string> kFlags{
      "--family", "--degree",  "--peaks",      "--expr",           "--params",         "--start",
      "--fix",    "--bounds",  "--y",          "--sigma-column",   "--sigma",          "--request",
      "--label",  "--loss",    "--loss-scale", "--method",         "--intervals",      "--starts",
      "--seed",   "--threads", "--deadline",   "--max-iterations", "--max-evaluations"};
  return kFlags;
}

std::vector<std::string> SplitList(const std::string& text) {
  std::vector<std::string> items;
  size_t begin = 0;
  while (true) {
    const size_t comma = text.find(',', begin);
    items.push_back(text.substr(begin, comma == std::string::npos ? comma : comma - begin));
    if (comma == std::string::npos) break;
    begin = comma + 1;
  }
  return items;
}

bool ParseNumber(const std::string& flag, const std::string& text, double* value,
                 std::string* error) {
  std::string detail;
  if (ParseNumberCell(text, value, &detail)) return true;
  *error = flag + ": " + detail;
  return false;
}

bool ParseInt(const std::string& flag, const std::string& text, long long min_value,
              long long* value, std::string* error) {
  size_t used = 0;
  long long parsed = 0;
  try {
    parsed = std::stoll(text, &used);
  } catch (const std::exception&) {
    used = 0;
  }
  if (text.empty() || used != text.size()) {
    *error = flag + ": '" + text + "' is not an integer";
    return false;
  }
  if (parsed < min_value) {
    *error = flag + " " + text + ": must be >= " + std::to_string(min_value);
    return false;
  }
  *value = parsed;
  return true;
}

bool ParseSmallInt(const std::string& flag, const std::string& text, int min_value, int* value,
                   std::string* error) {
  long long parsed = 0;
  if (!ParseInt(flag, text, min_value, &parsed, error)) return false;
  if (parsed > std::numeric_limits<int>::max()) {
    *error = flag + " " + text + ": too large";
    return false;
  }
  *value = static_cast<int>(parsed);
  return true;
}

// Splits "name=value"; the message shows the expected form.
bool SplitAssignment(const std::string& flag, const std::string& item, const char* form,
                     std::string* name, std::string* value, std::string* error) {
  const size_t equals = item.find('=');
  if (equals == std::string::npos || equals == 0) {
    *error = flag + ": '" + item + "' is not of the form " + form;
    return false;
  }
  *name = item.substr(0, equals);
  *value = item.substr(equals + 1);
  return true;
}

template <typename Entry>
void Merge(std::vector<Entry>* entries, Entry entry) {
  for (Entry& existing : *entries) {
    if (existing.name == entry.name) {
      existing = entry;
      return;
    }
  }
  entries->push_back(entry);
}

bool ParseValues(const std::string& flag, const std::string& text, std::vector<NamedValue>* entries,
                 std::string* error) {
  for (const std::string& item : SplitList(text)) {
    NamedValue entry;
    std::string value;
    if (!SplitAssignment(flag, item, "name=value", &entry.name, &value, error)) return false;
    if (!ParseNumber(flag + " " + entry.name, value, &entry.value, error)) return false;
    Merge(entries, entry);
  }
  return true;
}

bool ParseBoundSide(const std::string& flag, const std::string& text, double unbounded,
                    double* value, std::string* error) {
  if (text.empty()) {
    *value = unbounded;
  } else if (text == "inf" || text == "+inf") {
    *value = kInfinity;
  } else if (text == "-inf") {
    *value = -kInfinity;
  } else {
    return ParseNumber(flag, text, value, error);
  }
  return true;
}

bool ParseBoundsList(const std::string& flag, const std::string& text,
                     std::vector<NamedBounds>* entries, std::string* error) {
  for (const std::string& item : SplitList(text)) {
    NamedBounds entry;
    std::string range;
    if (!SplitAssignment(flag, item, "name=lower:upper", &entry.name, &range, error)) return false;
    const size_t colon = range.find(':');
    if (colon == std::string::npos) {
      *error = flag + ": '" + item + "' is not of the form name=lower:upper";
      return false;
    }
    const std::string field = flag + " " + entry.name;
    if (!ParseBoundSide(field, range.substr(0, colon), -kInfinity, &entry.lower, error) ||
        !ParseBoundSide(field, range.substr(colon + 1), kInfinity, &entry.upper, error)) {
      return false;
    }
    Merge(entries, entry);
  }
  return true;
}

// Applies one flag with its value to the request.
bool ApplyFlag(const std::string& flag, const std::string& value, FitRequest* request,
               std::string* error) {
  ModelSpec& model = request->model;
  if (flag == "--family") {
    model = ModelSpec{};
    model.family = value;
    if (value.empty()) {
      *error = "--family: expected a family name (see foothold families)";
      return false;
    }
    return true;
  }
  if (flag == "--expr") {
    model = ModelSpec{};
    model.expression = value;
    if (value.empty()) {
      *error = "--expr: expected a maths expression";
      return false;
    }
    return true;
  }
  if (flag == "--degree") {
    int degree = 0;
    if (!ParseSmallInt(flag, value, 0, &degree, error)) return false;
    model.degree = degree;
    return true;
  }
  if (flag == "--peaks") {
    if (value == "auto") {
      model.auto_peaks = true;
      model.peaks.reset();
      return true;
    }
    int peaks = 0;
    if (!ParseSmallInt(flag, value, 1, &peaks, error)) return false;
    model.peaks = peaks;
    model.auto_peaks = false;
    return true;
  }
  if (flag == "--params") {
    model.parameters = SplitList(value);
    for (const std::string& name : model.parameters) {
      if (name.empty()) {
        *error = "--params: '" + value + "' has an empty name; expected a,b,c";
        return false;
      }
    }
    return true;
  }
  if (flag == "--start") return ParseValues(flag, value, &request->start, error);
  if (flag == "--fix") return ParseValues(flag, value, &request->fix, error);
  if (flag == "--bounds") return ParseBoundsList(flag, value, &request->bounds, error);
  if (flag == "--y") {
    request->response = value;
    return true;
  }
  if (flag == "--sigma-column") {
    request->sigma_column = value;
    return true;
  }
  if (flag == "--sigma") {
    request->sigma_mode = value;
    return true;
  }
  if (flag == "--label") {
    request->label = value;
    return true;
  }
  // Named choices are checked here too, so the message names the flag.
  auto choose = [&](const auto& options, std::string* field) {
    if (!IsOneOf(value, options)) {
      *error = flag + ": '" + value + "': expected one of " + JoinOptions(options);
      return false;
    }
    *field = value;
    return true;
  };
  if (flag == "--loss") return choose(kKnownLosses, &request->loss);
  if (flag == "--method") return choose(kKnownMethods, &request->method);
  if (flag == "--intervals") return choose(kKnownIntervals, &request->intervals);
  if (flag == "--loss-scale") return ParseNumber(flag, value, &request->loss_scale, error);
  if (flag == "--deadline") return ParseNumber(flag, value, &request->deadline_seconds, error);
  if (flag == "--starts") return ParseSmallInt(flag, value, 1, &request->starts, error);
  if (flag == "--threads") return ParseSmallInt(flag, value, 1, &request->threads, error);
  if (flag == "--max-iterations") {
    return ParseSmallInt(flag, value, 0, &request->max_iterations, error);
  }
  if (flag == "--max-evaluations") {
    return ParseSmallInt(flag, value, 1, &request->max_evaluations, error);
  }
  if (flag == "--seed") {
    long long seed = 0;
    if (!ParseInt(flag, value, 0, &seed, error)) return false;
    request->seed = static_cast<std::uint64_t>(seed);
    return true;
  }
  *error = "unknown flag '" + flag + "' (see foothold fit --help)";
  return false;
}

}  // namespace

bool ParseFitArguments(const std::vector<std::string>& args, FitCommand* out, std::string* error) {
  FitCommand command;
  std::vector<std::pair<std::string, std::string>> flags;
  std::string data_path;
  std::string request_path;
  for (size_t k = 0; k < args.size(); ++k) {
    const std::string& arg = args[k];
    if (arg == "--help" || arg == "-h") {
      command.help = true;
      *out = std::move(command);
      return true;
    }
    if (arg == "--json") {
      command.json = true;
      continue;
    }
    if (arg.size() > 1 && arg[0] == '-' &&
        !(arg.size() > 1 && std::isdigit(static_cast<unsigned char>(arg[1])))) {
      std::string flag = arg;
      std::string value;
      const size_t equals = arg.find('=');
      const bool inline_value = arg.rfind("--", 0) == 0 && equals != std::string::npos;
      if (inline_value) {
        flag = arg.substr(0, equals);
        value = arg.substr(equals + 1);
      }
      if (!ValueFlags().count(flag)) {
        *error = "unknown flag '" + flag + "' (see foothold fit --help)";
        return false;
      }
      if (!inline_value) {
        if (k + 1 >= args.size()) {
          *error = flag + ": missing value";
          return false;
        }
        value = args[++k];
      }
      if (flag == "--request") {
        request_path = value;
      } else {
        flags.emplace_back(flag, value);
      }
      continue;
    }
    if (!data_path.empty()) {
      *error = "more than one DATA file given: '" + data_path + "' and '" + arg + "'";
      return false;
    }
    data_path = arg;
  }
  if (!request_path.empty()) {
    std::string text;
    if (!ReadTextFile(request_path, &text, error)) return false;
    std::string detail;
    if (!DecodeFitRequestText(text, &command.request, &detail)) {
      *error = request_path + ": " + detail;
      return false;
    }
    command.data_source = request_path;
  }
  if (!data_path.empty()) {
    if (!LoadDataFile(data_path, &command.request.data, error)) return false;
    command.data_source = data_path;
  } else if (command.request.data.IsEmpty()) {
    *error = "no data: give a DATA file (CSV or JSON columns) or a --request with \"data\"";
    return false;
  }
  // The model kind first: --family and --expr start a new model that --degree, --peaks
  // and --params then refine, whatever order they were typed in.
  for (const bool model_kind : {true, false}) {
    for (const auto& [flag, value] : flags) {
      if ((flag == "--family" || flag == "--expr") != model_kind) continue;
      if (!ApplyFlag(flag, value, &command.request, error)) return false;
    }
  }
  *out = std::move(command);
  return true;
}

const char* FitUsage() {
  return R"TEXT(usage: foothold fit [DATA] (--family NAME [--degree D] [--peaks K] | --expr EXPR [--params a,b,...])
                    [options] [--json]

Fits one dataset locally with the embedded engine and prints the result.

DATA                     CSV with a header row naming the columns, or a .json file holding an
                         object of columns {"x": [...], "y": [...], "sigma": [...]}. Overrides
                         the "data" of --request.
--request FILE           read a request document (JSON, docs/result-document.md); the flags
                         below override its fields
--family NAME            a catalogue family (see foothold families)
--degree D               polynomial degree (family polynomial)
--peaks K|auto           number of peaks (families multi_*); auto picks it by AICc
--expr EXPR              a model written as maths in the data columns and free parameters,
                         e.g. "h*exp(-(x-m)^2/(2*s^2))"
--params a,b,...         parameter order of --expr (default: order of first use)
--start a=1,b=2          start values; a family guesses the missing ones from the data,
                         an expression needs one for every free parameter
--fix c=0                hold parameters at these values
--bounds a=0:inf,b=-1:1  lower:upper per parameter; an empty side or inf means unbounded
--y COLUMN               response: a column or an expression in the columns such as
                         "log(y)" (default y)
--sigma-column COLUMN    per-point standard deviations (default: the column sigma if present)
--sigma absolute|relative  how sigma scale the covariance (default absolute)
--label TEXT             free text carried into the result
--loss NAME              squared (default), soft_l1, huber, cauchy, tukey or l1; a robust
                         loss marks outliers and weighs them down
--loss-scale S           scale of the robust loss in the response's units (default:
                         automatic, 1.4826 MAD of the residuals)
--method NAME            local solver: lm (default, Levenberg-Marquardt), gauss_newton
                         or bfgs
--intervals wald|profile confidence intervals: wald (default, from the covariance) or
                         profile (the Wald intervals and, beside them, profile-likelihood
                         intervals; see docs/statistics.md)
--starts N               local fits to run: 1 = one fit from the best start; default
                         automatic (max(16, 8 p) up to 256, stopped early by a
                         Bayesian rule once no unseen optimum is expected, extended
                         up to 4x while better optima still appear late)
--seed N                 seed of the quasi-random and jitter starts (default 7); the
                         same request and seed give the same result
--threads N              worker threads (default: all cores); never changes the result
--deadline SECONDS       wall-clock limit of the fit
--max-iterations N       solver iteration limit (default 1000)
--max-evaluations N      solver evaluation limit (default 4000)
--json                   print the result document (JSON) instead of the report
--help                   this text

Exit status: 0 fitted, 2 bad input (one line on stderr), 3 no convergence (the result is
still printed).
)TEXT";
}

}  // namespace foothold
