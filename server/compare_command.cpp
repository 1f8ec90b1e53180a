#include "server/compare_command.h"

#include <cmath>
#include <cstdio>
#include <set>

#include "heuristics/families/catalogue.h"
#include "server/cli.h"
#include "server/fit_flags.h"
#include "server/fit_service.h"
#include "server/json_codec.h"
#include "server/model_comparison.h"

namespace foothold {
namespace {

// Flags that name or shape one model; compare chooses the models itself.
const std::set<std::string>& ModelFlags() {
  static const std::set<std::string> kFlags{"--family", "--expr",   "--params", "--start",
                                            "--fix",    "--bounds", "--request"};
  return kFlags;
}

struct CompareCommand {
  std::vector<std::string> families;
  std::vector<std::string> fit_args;  // forwarded to the fit flags
  std::string degree;                 // --degree, applied to polynomial only
  std::string peaks;                  // --peaks, applied to multi_* only
  bool json = false;
  bool help = false;
};

std::vector<std::string> SplitNames(const std::string& text) {
  std::vector<std::string> names;
  size_t begin = 0;
  while (begin <= text.size()) {
    const size_t comma = text.find(',', begin);
    const size_t end = comma == std::string::npos ? text.size() : comma;
    names.push_back(text.substr(begin, end - begin));
    if (comma == std::string::npos) break;
    begin = comma + 1;
  }
  return names;
}

bool ParseCompareArguments(const std::vector<std::string>& args, CompareCommand* out,
                           std::string* error) {
  for (size_t k = 0; k < args.size(); ++k) {
    std::string flag = args[k];
    std::string value;
    bool has_value = false;
    const size_t equals = flag.find('=');
    if (flag.rfind("--", 0) == 0 && equals != std::string::npos) {
      value = flag.substr(equals + 1);
      flag = flag.substr(0, equals);
      has_value = true;
    }
    auto take_value = [&]() {
      if (has_value) return true;
      if (k + 1 >= args.size()) {
        *error = "compare: " + flag + ": missing value";
        return false;
      }
      value = args[++k];
      return true;
    };
    if (flag == "--help" || flag == "-h") {
      out->help = true;
    } else if (flag == "--json") {
      out->json = true;
    } else if (flag == "--families") {
      if (!take_value()) return false;
      out->families = SplitNames(value);
    } else if (flag == "--degree" || flag == "--peaks") {
      if (!take_value()) return false;
      (flag == "--degree" ? out->degree : out->peaks) = value;
    } else if (ModelFlags().count(flag)) {
      *error = "compare: " + flag +
               " is not accepted: compare fits each family of --families from its own guesses";
      return false;
    } else {
      out->fit_args.push_back(args[k]);
    }
  }
  if (out->help) return true;
  if (out->families.size() < 2) {
    *error = "compare: --families needs at least two comma-separated family names";
    return false;
  }
  std::set<std::string> seen;
  for (const std::string& name : out->families) {
    if (name.empty() || !seen.insert(name).second) {
      *error = "compare: --families: '" + name + "' is empty or given twice";
      return false;
    }
  }
  return true;
}

// The fit flags of one family: the forwarded flags, the family, and --degree or --peaks
// where the family takes them.
std::vector<std::string> FitArgsFor(const CompareCommand& command, const std::string& family) {
  std::vector<std::string> args = command.fit_args;
  args.insert(args.end(), {"--family", family});
  const FamilyDescription* description = FindFamily(family);
  if (description == nullptr) return args;
  for (const std::string& option : description->options) {
    if (option == "degree" && !command.degree.empty())
      args.insert(args.end(), {"--degree", command.degree});
    if (option == "peaks" && !command.peaks.empty())
      args.insert(args.end(), {"--peaks", command.peaks});
  }
  return args;
}

std::string Number(double value, const char* format = "%.4g") {
  if (!std::isfinite(value)) return "-";
  char buffer[32];
  std::snprintf(buffer, sizeof(buffer), format, value);
  return buffer;
}

std::string Pad(const std::string& text, size_t width) {
  return text.size() >= width ? text + " " : text + std::string(width - text.size(), ' ');
}

void WriteTable(const std::string& source, const std::vector<CandidateFit>& fits,
                const ModelComparison& comparison, std::ostream& out) {
  const int n = fits.empty() ? 0 : fits.front().outcome.statistics.num_points;
  out << "compare " << source << ": " << n << " points, " << fits.size()
      << " families ranked by AICc\n\n";
  out << Pad("rank", 6) << Pad("family", 18) << Pad("k", 4) << Pad("rss", 12) << Pad("AICc", 12)
      << Pad("dAICc", 10) << Pad("weight", 9) << "verdict\n";
  for (const RankedModel& row : comparison.ranking) {
    const Verdict& verdict = fits[row.index].outcome.verdict;
    std::string flags = verdict.flags.empty() ? "clean" : "";
    for (size_t k = 0; k < verdict.flags.size(); ++k) flags += (k ? "," : "") + verdict.flags[k];
    out << Pad(std::to_string(row.rank), 6) << Pad(row.family, 18)
        << Pad(std::to_string(row.num_free), 4) << Pad(Number(row.rss), 12)
        << Pad(Number(row.aicc, "%.2f"), 12) << Pad(Number(row.delta_aicc, "%.2f"), 10)
        << Pad(Number(row.akaike_weight, "%.3f"), 9) << flags << '\n';
  }
  if (!comparison.nested.empty()) {
    out << "\nnested pairs (extra-sum-of-squares F-test):\n";
    for (const NestedTest& test : comparison.nested) {
      out << "  " << test.simpler << " in " << test.fuller << " at " << test.nesting
          << ": F = " << Number(test.f) << " on (" << test.df_extra << ", " << test.df_residual
          << ") df, p = " << Number(test.p_value) << "; "
          << (test.prefers_fuller ? test.fuller + "'s extra parameters are justified"
                                  : "the simpler " + test.simpler + " suffices")
          << (test.on_boundary ? " (nesting on a bound: p is conservative)" : "") << '\n';
    }
  }
  out << '\n';
  if (comparison.winner.empty()) {
    out << "no family gave a finite AICc\n";
    return;
  }
  const RankedModel& best = comparison.ranking.front();
  out << "best: " << comparison.winner << " (Akaike weight " << Number(best.akaike_weight, "%.3f");
  if (std::isfinite(comparison.winner_margin)) {
    out << ", AICc " << Number(comparison.winner_margin, "%.2f") << " below "
        << comparison.ranking[1].family;
  }
  out << ")\n";
}

// The comparison object is the daemon's (server/json_codec.h); each family's full result
// follows in ranking order.
Json EncodeCompareDocument(const std::string& source, const std::vector<CandidateFit>& fits,
                           const ModelComparison& comparison) {
  Json document;
  document["data"] = source;
  document["comparison"] = EncodeComparison(fits, comparison);
  Json& models = document["models"] = Json::array();
  for (const RankedModel& row : comparison.ranking) {
    models.push_back(
        {{"family", row.family}, {"result", EncodeFitOutcome(fits[row.index].outcome)}});
  }
  return document;
}

}  // namespace

const char* CompareUsage() {
  return R"TEXT(usage: foothold compare DATA --families NAME,NAME[,...] [--json] [fit flags]

Fits each family to DATA with the normal fit path (its own guesses, multistart, verdict)
and ranks the families by AICc: the difference to the best (dAICc) and the Akaike weight,
the probability-like share of support among the families given (Burnham & Anderson 2002).
Where two families nest, the extra-sum-of-squares F-test says whether the fuller one's
extra parameters are justified at p < 0.05. Declared nestings: line in polynomial,
polynomial in higher degree, exp_decay in biexp_decay and in stretched_exp, logistic4 in
logistic5, gaussian (eta = 0) and lorentzian (eta = 1) in pseudo_voigt.

--families a,b,...   two or more catalogue families (see foothold families)
--json               print {data, comparison, models}: the ranking as the daemon's
                     comparison jobs give it, then each family's full result
--degree D           polynomial degree (applies to polynomial only)
--peaks K|auto       peak count (applies to multi_* only)
other flags          as foothold fit: --y, --sigma, --sigma-column, --starts, --seed,
                     --threads, --deadline, --max-iterations, --max-evaluations, --loss
Not accepted: --family, --expr, --params, --start, --fix, --bounds, --request.

Exit status as foothold fit: 0 success, 1 the output could not be written, 2 bad input,
3 a fit did not converge (the table is still printed).
)TEXT";
}

int RunCompare(const std::vector<std::string>& args, std::ostream& out, std::ostream& err) {
  CompareCommand command;
  std::string error;
  auto bad_input = [&err](const std::string& message) {
    err << "foothold: " << message << '\n';
    return kExitBadInput;
  };
  if (!ParseCompareArguments(args, &command, &error)) return bad_input(error);
  if (command.help) {
    out << CompareUsage();
    return kExitOk;
  }
  std::vector<CandidateFit> fits;
  std::string source;
  bool all_converged = true;
  for (const std::string& family : command.families) {
    FitCommand fit;
    if (!ParseFitArguments(FitArgsFor(command, family), &fit, &error)) {
      return bad_input("compare: " + error);
    }
    CandidateFit candidate;
    candidate.family = family;
    if (!RunFit(fit.request, &candidate.outcome, &error)) {
      return bad_input("compare: " + family + ": " + error);
    }
    source = fit.data_source;
    all_converged = all_converged && candidate.outcome.IsConverged();
    fits.push_back(std::move(candidate));
  }
  const ModelComparison comparison = CompareFits(fits);
  if (command.json) {
    out << EncodeCompareDocument(source, fits, comparison).dump(2) << '\n';
  } else {
    WriteTable(source, fits, comparison, out);
  }
  out.flush();
  if (!out) {
    err << "foothold: writing the result failed\n";
    return kExitOutputFailed;
  }
  return all_converged ? kExitOk : kExitNotConverged;
}

}  // namespace foothold
