// The candidates of `foothold guess` as JSON (declared in json_codec.h).
#include <cmath>

#include "server/guess_command.h"
#include "server/json_codec.h"

namespace foothold {

Json EncodeGuessList(const std::vector<std::string>& parameter_names,
                     const std::vector<ListedGuess>& guesses,
                     const std::vector<std::string>& guessed,
                     const std::vector<std::string>& warnings) {
  auto number = [](double value) { return std::isfinite(value) ? Json(value) : Json(nullptr); };
  Json candidates = Json::array();
  for (const ListedGuess& guess : guesses) {
    Json parameters = Json::object();
    for (size_t j = 0; j < parameter_names.size(); ++j) {
      parameters[parameter_names[j]] = number(guess.parameters[static_cast<Eigen::Index>(j)]);
    }
    candidates.push_back(
        {{"origin", guess.origin}, {"rss", number(guess.rss)}, {"parameters", parameters}});
  }
  Json document = Json::object();
  document["candidates"] = std::move(candidates);
  document["guessed"] = guessed;
  document["warnings"] = warnings;
  return document;
}

}  // namespace foothold
