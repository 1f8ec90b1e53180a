// The comparison of several families (server/model_comparison.h) as JSON: the object that
// `foothold compare --json` prints and that a comparison job's result carries beside the
// winner's result document (docs/api.md, "Comparing families").
#include <cmath>

#include "server/json_codec.h"
#include "server/model_comparison.h"

namespace foothold {
namespace {

Json Number(double value) { return std::isfinite(value) ? Json(value) : Json(); }

Json EncodeRankedModel(const RankedModel& row, const FitOutcome& outcome) {
  Json entry;
  entry["family"] = row.family;
  entry["rank"] = row.rank;
  entry["free_parameters"] = row.num_free;
  entry["rss"] = Number(row.rss);
  entry["aicc"] = Number(row.aicc);
  entry["delta_aicc"] = Number(row.delta_aicc);
  entry["akaike_weight"] = Number(row.akaike_weight);
  entry["converged"] = row.is_converged;
  entry["termination"] = ToString(outcome.best.termination);
  // The best values only: the winner's full result is the document around the comparison.
  Json parameters = Json::object();
  const Eigen::VectorXd& values = outcome.best.parameters;
  for (size_t j = 0; j < outcome.parameter_names.size(); ++j) {
    const bool has_value = static_cast<Eigen::Index>(j) < values.size();
    parameters[outcome.parameter_names[j]] =
        has_value ? Number(values[static_cast<Eigen::Index>(j)]) : Json();
  }
  entry["parameters"] = std::move(parameters);
  return entry;
}

Json EncodeNestedTest(const NestedTest& test) {
  return Json{{"simpler", test.simpler},         {"fuller", test.fuller},
              {"nesting", test.nesting},         {"df_extra", test.df_extra},
              {"df_residual", test.df_residual}, {"f", Number(test.f)},
              {"p_value", Number(test.p_value)}, {"prefers_fuller", test.prefers_fuller},
              {"on_boundary", test.on_boundary}};
}

}  // namespace

Json EncodeComparison(const std::vector<CandidateFit>& fits, const ModelComparison& comparison) {
  Json document;
  document["winner"] = comparison.winner.empty() ? Json() : Json(comparison.winner);
  document["margin_aicc"] = Number(comparison.winner_margin);
  Json& ranking = document["ranking"] = Json::array();
  for (const RankedModel& row : comparison.ranking) {
    ranking.push_back(EncodeRankedModel(row, fits[static_cast<size_t>(row.index)].outcome));
  }
  Json& nested = document["nested"] = Json::array();
  for (const NestedTest& test : comparison.nested) nested.push_back(EncodeNestedTest(test));
  return document;
}

Json EncodeComparisonResult(const std::vector<CandidateFit>& fits,
                            const ModelComparison& comparison) {
  // ranking[0] is the winner when one has a finite AICc, else still the first family tried.
  const size_t best =
      comparison.ranking.empty() ? 0 : static_cast<size_t>(comparison.ranking.front().index);
  Json document = EncodeFitOutcome(fits.at(best).outcome);
  document["comparison"] = EncodeComparison(fits, comparison);
  return document;
}

}  // namespace foothold
