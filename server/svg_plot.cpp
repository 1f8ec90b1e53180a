#include "server/svg_plot.h"

#include <algorithm>
#include <cmath>
#include <numeric>
#include <sstream>

namespace foothold {
namespace {

constexpr double kWidth = 720;
constexpr double kLeft = 70;
constexpr double kRight = 20;
constexpr double kMainTop = 40;
constexpr double kMainHeight = 280;
constexpr double kResidualTop = 350;
constexpr double kResidualHeight = 110;
constexpr double kHeight = 500;

std::string Escape(const std::string& text) {
  std::string out;
  for (char c : text) {
    if (c == '<')
      out += "&lt;";
    else if (c == '>')
      out += "&gt;";
    else if (c == '&')
      out += "&amp;";
    else if (c == '"')
      out += "&quot;";
    else
      out += c;
  }
  return out;
}

struct Range {
  double low = 0;
  double high = 1;
};

Range RangeOf(const std::vector<double>& a, const std::vector<double>& b = {}) {
  Range range{std::numeric_limits<double>::infinity(), -std::numeric_limits<double>::infinity()};
  for (const std::vector<double>* values : {&a, &b}) {
    for (double v : *values) {
      if (!std::isfinite(v)) continue;
      range.low = std::min(range.low, v);
      range.high = std::max(range.high, v);
    }
  }
  if (!(range.low <= range.high)) return Range{0, 1};
  if (range.high - range.low < 1e-300) {
    range.low -= 0.5;
    range.high += 0.5;
  }
  const double pad = 0.05 * (range.high - range.low);
  return Range{range.low - pad, range.high + pad};
}

double Map(double v, Range range, double begin, double length, bool flip) {
  const double t = (v - range.low) / (range.high - range.low);
  return flip ? begin + length * (1 - t) : begin + length * t;
}

void Frame(std::ostringstream& out, double top, double height, Range y, const char* label) {
  const double width = kWidth - kLeft - kRight;
  out << "<rect x=\"" << kLeft << "\" y=\"" << top << "\" width=\"" << width << "\" height=\""
      << height << "\" fill=\"none\" stroke=\"#999\"/>\n";
  out << "<text x=\"" << kLeft - 6 << "\" y=\"" << top + 10
      << "\" text-anchor=\"end\" font-size=\"10\">" << y.high << "</text>\n";
  out << "<text x=\"" << kLeft - 6 << "\" y=\"" << top + height
      << "\" text-anchor=\"end\" font-size=\"10\">" << y.low << "</text>\n";
  out << "<text x=\"12\" y=\"" << top + height / 2 << "\" font-size=\"11\">" << label
      << "</text>\n";
}

}  // namespace

std::string RenderFitSvg(const FitPlotData& data) {
  std::ostringstream out;
  out.precision(4);
  const double width = kWidth - kLeft - kRight;
  const size_t n = std::min({data.x.size(), data.y.size(), data.fitted.size()});
  std::vector<double> residuals(n);
  for (size_t i = 0; i < n; ++i) residuals[i] = data.y[i] - data.fitted[i];
  const Range x = RangeOf(data.x);
  const Range y = RangeOf(data.y, data.fitted);
  Range r = RangeOf(residuals);
  const double r_max = std::max(std::fabs(r.low), std::fabs(r.high));
  r = Range{-r_max, r_max};
  out << "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"" << kWidth << "\" height=\"" << kHeight
      << "\" viewBox=\"0 0 " << kWidth << ' ' << kHeight
      << "\" font-family=\"sans-serif\">\n<title>" << Escape(data.title) << "</title>\n";
  out << "<text x=\"" << kLeft << "\" y=\"24\" font-size=\"14\">" << Escape(data.title)
      << "</text>\n";
  Frame(out, kMainTop, kMainHeight, y, "y");
  Frame(out, kResidualTop, kResidualHeight, r, "resid");
  for (size_t i = 0; i < n; ++i) {
    if (!std::isfinite(data.x[i]) || !std::isfinite(data.y[i])) continue;
    out << "<circle class=\"data\" cx=\"" << Map(data.x[i], x, kLeft, width, false) << "\" cy=\""
        << Map(data.y[i], y, kMainTop, kMainHeight, true) << "\" r=\"2\" fill=\"#1f77b4\"/>\n";
  }
  std::vector<size_t> order(n);
  std::iota(order.begin(), order.end(), 0);
  std::sort(order.begin(), order.end(), [&](size_t a, size_t b) { return data.x[a] < data.x[b]; });
  out << "<polyline class=\"fit\" fill=\"none\" stroke=\"#d62728\" stroke-width=\"1.5\" points=\"";
  for (size_t i : order) {
    if (!std::isfinite(data.fitted[i])) continue;
    out << Map(data.x[i], x, kLeft, width, false) << ','
        << Map(data.fitted[i], y, kMainTop, kMainHeight, true) << ' ';
  }
  out << "\"/>\n";
  const double zero = Map(0, r, kResidualTop, kResidualHeight, true);
  out << "<line x1=\"" << kLeft << "\" y1=\"" << zero << "\" x2=\"" << kLeft + width << "\" y2=\""
      << zero << "\" stroke=\"#999\" stroke-dasharray=\"4 3\"/>\n";
  for (size_t i = 0; i < n; ++i) {
    if (!std::isfinite(residuals[i])) continue;
    out << "<circle class=\"residual\" cx=\"" << Map(data.x[i], x, kLeft, width, false)
        << "\" cy=\"" << Map(residuals[i], r, kResidualTop, kResidualHeight, true)
        << "\" r=\"1.8\" fill=\"#555\"/>\n";
  }
  out << "<text x=\"" << kLeft << "\" y=\"" << kHeight - 12 << "\" font-size=\"10\">" << x.low
      << "</text><text x=\"" << kLeft + width << "\" y=\"" << kHeight - 12
      << "\" text-anchor=\"end\" font-size=\"10\">" << x.high << "</text>\n</svg>\n";
  return out.str();
}

std::string RenderBasinsSvg(const std::string& title, const std::vector<BasinBar>& basins) {
  std::ostringstream out;
  out.precision(3);
  const double width = kWidth - kLeft - kRight;
  const double slot = width / std::max<size_t>(1, basins.size());
  out << "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"" << kWidth << "\" height=\"360\""
      << " viewBox=\"0 0 " << kWidth << " 360\" font-family=\"sans-serif\">\n<title>"
      << Escape(title) << "</title>\n<text x=\"" << kLeft << "\" y=\"24\" font-size=\"14\">"
      << Escape(title) << "</text>\n";
  Frame(out, kMainTop, kMainHeight, Range{0, 1}, "share");
  for (size_t i = 0; i < basins.size(); ++i) {
    const double share = std::clamp(basins[i].share, 0.0, 1.0);
    const double height = kMainHeight * share;
    const double left = kLeft + slot * i + slot * 0.15;
    out << "<rect class=\"basin\" x=\"" << left << "\" y=\"" << kMainTop + kMainHeight - height
        << "\" width=\"" << slot * 0.7 << "\" height=\"" << height << "\" fill=\""
        << (i == 0 ? "#2ca02c" : "#ff7f0e") << "\"/>\n";
    out << "<text x=\"" << left + slot * 0.35 << "\" y=\"" << kMainTop + kMainHeight + 16
        << "\" text-anchor=\"middle\" font-size=\"10\">#" << basins[i].id << " Δrss "
        << basins[i].delta_rss << "</text>\n";
  }
  out << "</svg>\n";
  return out.str();
}

}  // namespace foothold
