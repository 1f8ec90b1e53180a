#pragma once
// A dataset as the engine sees it: predictor columns, the response, optional sigma.

#include <Eigen/Core>
#include <string>
#include <vector>

namespace foothold {

struct Dataset {
  // Names of the predictor columns, e.g. {"x"} or {"x1", "x2"}.
  std::vector<std::string> predictor_names;
  // n x k, column j holds predictor_names[j].
  Eigen::MatrixXd predictors;
  // n values being fitted.
  Eigen::VectorXd response;
  // Empty (unweighted) or n values, each finite and > 0.
  Eigen::VectorXd sigma;

  int NumPoints() const { return static_cast<int>(response.size()); }
  bool HasSigma() const { return sigma.size() > 0; }
  // Index of a predictor column by name, or -1.
  int PredictorIndex(const std::string& name) const;
  // Sizes agree, every value finite, sigma > 0. The message names the column and row.
  bool Validate(std::string* error) const;
  // A dataset whose predictors are exactly `names`, in that order (what a model reads).
  // False with a message when a name is missing.
  bool SelectPredictors(const std::vector<std::string>& names, Dataset* out,
                        std::string* error) const;
};

}  // namespace foothold
