#pragma once
// Small SVG charts written by hand: a fit (data, best curve, residuals) and a basin
// comparison. No external tools; the output is a self-contained SVG document.

#include <string>
#include <vector>

namespace foothold {

struct FitPlotData {
  std::string title;
  std::vector<double> x;       // data predictor
  std::vector<double> y;       // data response
  std::vector<double> fitted;  // model at x with the best parameters
};

// Two panels: data points with the fitted curve above, residuals (y - fitted) below.
std::string RenderFitSvg(const FitPlotData& data);

struct BasinBar {
  int id = 0;
  double delta_rss = 0;  // gap to the best basin
  double share = 0;      // of converged starts, 0..1
};

// One bar per basin: its share of the starts, labelled with its rss gap.
std::string RenderBasinsSvg(const std::string& title, const std::vector<BasinBar>& basins);

}  // namespace foothold
