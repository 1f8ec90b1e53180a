#include "server/guess_command.h"

#include <cmath>
#include <cstdio>
#include <limits>

#include "server/fit_flags.h"
#include "server/json_codec.h"

namespace foothold {
namespace {

constexpr int kDigits = 6;

std::string Format(double value) {
  if (!std::isfinite(value)) return "n/a";
  char buffer[48];
  std::snprintf(buffer, sizeof(buffer), "%.*g", kDigits, value);
  return buffer;
}

// Weighted rss at `params`; NaN when the model is not finite there.
double RssAt(const Problem& problem, const Eigen::VectorXd& params) {
  const int n = problem.data.NumPoints();
  Eigen::VectorXd values = Eigen::VectorXd::Constant(n, std::numeric_limits<double>::quiet_NaN());
  problem.model->Evaluate(problem.data.predictors, params.data(), values.data());
  Eigen::VectorXd residual = values - problem.data.response;
  if (problem.data.HasSigma()) residual = residual.cwiseQuotient(problem.data.sigma);
  const double rss = residual.squaredNorm();
  return std::isfinite(rss) ? rss : std::numeric_limits<double>::quiet_NaN();
}

void WriteTable(const PreparedFit& prepared, const std::vector<ListedGuess>& guesses,
                std::ostream& out) {
  const std::vector<std::string>& names = prepared.model->ParameterNames();
  std::vector<std::vector<std::string>> rows;
  std::vector<std::string> header{"start", "rss"};
  header.insert(header.end(), names.begin(), names.end());
  rows.push_back(header);
  for (const ListedGuess& guess : guesses) {
    std::vector<std::string> row{guess.origin, Format(guess.rss)};
    for (Eigen::Index j = 0; j < guess.parameters.size(); ++j) {
      row.push_back(Format(guess.parameters[j]));
    }
    rows.push_back(std::move(row));
  }
  std::vector<size_t> widths(header.size(), 0);
  for (const auto& row : rows) {
    for (size_t c = 0; c < row.size(); ++c) widths[c] = std::max(widths[c], row[c].size());
  }
  for (const auto& row : rows) {
    for (size_t c = 0; c < row.size(); ++c) {
      out << row[c];
      if (c + 1 < row.size()) out << std::string(widths[c] - row[c].size() + 2, ' ');
    }
    out << '\n';
  }
  for (const std::string& warning : prepared.warnings) out << "note: " << warning << '\n';
}

}  // namespace

std::vector<ListedGuess> ListGuesses(const PreparedFit& prepared) {
  std::vector<ListedGuess> guesses;
  for (const StartCandidate& candidate : prepared.candidates) {
    guesses.push_back(
        {candidate.origin, candidate.parameters, RssAt(prepared.problem, candidate.parameters)});
  }
  return guesses;
}

int RunGuessCommand(const std::vector<std::string>& args, std::ostream& out, std::ostream& err) {
  FitCommand command;
  std::string error;
  auto bad_input = [&](const std::string& message) {
    err << "foothold: " << message << '\n';
    return 2;
  };
  if (!ParseFitArguments(args, &command, &error)) return bad_input(error);
  if (command.help) {
    out << "usage: foothold guess [DATA] (--family NAME | --expr EXPR [--params a,b,...]) "
           "[fit flags] [--json]\n\nLists the seeded starts a fit would begin with: the "
           "user's own start (when complete) and every\ncandidate the guesser derives from "
           "the data, named as in the start log, with the rss\nat each. Takes the same flags "
           "as foothold fit (see foothold fit --help); nothing is fitted.\n";
    return 0;
  }
  PreparedFit prepared;
  if (!PrepareFit(command.request, &prepared, &error)) return bad_input(error);
  const std::vector<ListedGuess> guesses = ListGuesses(prepared);
  if (command.json) {
    out << EncodeGuessList(prepared.model->ParameterNames(), guesses, prepared.guessed,
                           prepared.warnings)
               .dump(2)
        << '\n';
  } else {
    WriteTable(prepared, guesses, out);
  }
  out.flush();
  return out ? 0 : 1;
}

}  // namespace foothold
