#include "engine/model/families/internal/canonical_forms.h"

#include <cmath>

namespace foothold {
namespace family_math {
namespace {

// value - start reduced to [0, period).
double Offset(double value, double start, double period) {
  double offset = std::fmod(value - start, period);
  if (offset < 0) offset += period;
  if (offset >= period) offset -= period;  // offset + period rounded up to period
  return offset;
}

}  // namespace

bool Inside(double value, double lower, double upper) { return value >= lower && value <= upper; }

bool WrapPeriodic(double value, double period, double lower, double upper, double* out) {
  if (!std::isfinite(value)) return false;
  const double window = -0.5 * period;
  double wrapped;
  if (lower <= window && upper >= window + period) {
    wrapped =
        value >= window && value < window + period ? value : window + Offset(value, window, period);
  } else if (std::isfinite(lower)) {
    wrapped =
        value >= lower && value < lower + period ? value : lower + Offset(value, lower, period);
  } else if (std::isfinite(upper)) {
    wrapped =
        value <= upper && value > upper - period ? value : upper - Offset(upper, value, period);
  } else {
    return false;  // both bounds infinite always takes the first branch
  }
  if (!Inside(wrapped, lower, upper)) return false;
  *out = wrapped;
  return true;
}

void CanonicalizeEvenSign(int index, const double* lower, const double* upper, double* params) {
  const double value = params[index];
  if (value < 0 && Inside(-value, lower[index], upper[index])) params[index] = -value;
}

void CanonicalizeOscillation(int amplitude, int frequency, int phase, const double* lower,
                             const double* upper, double* params) {
  const double a = params[amplitude];
  const double f = params[frequency];
  const double p = params[phase];
  if (!std::isfinite(a) || !std::isfinite(f) || !std::isfinite(p)) return;
  // sin(-w x + p) = -sin(w x - p).
  double flipped_phase;
  if (f < 0 && Inside(-a, lower[amplitude], upper[amplitude]) &&
      Inside(-f, lower[frequency], upper[frequency]) &&
      WrapPeriodic(-p, 2 * kPi, lower[phase], upper[phase], &flipped_phase)) {
    params[amplitude] = -a;
    params[frequency] = -f;
    params[phase] = flipped_phase;
  }
  // -A sin(t) = A sin(t + pi).
  const double a2 = params[amplitude];
  double shifted_phase;
  if (a2 < 0 && Inside(-a2, lower[amplitude], upper[amplitude]) &&
      WrapPeriodic(params[phase] + kPi, 2 * kPi, lower[phase], upper[phase], &shifted_phase)) {
    params[amplitude] = -a2;
    params[phase] = shifted_phase;
  }
  double wrapped;
  if (WrapPeriodic(params[phase], 2 * kPi, lower[phase], upper[phase], &wrapped)) {
    params[phase] = wrapped;
  }
}

void CanonicalizePlateaus(int bottom, int top, int hill, const double* lower, const double* upper,
                          double* params) {
  const double b = params[bottom];
  const double t = params[top];
  const double h = params[hill];
  if (!std::isfinite(b) || !std::isfinite(t) || !std::isfinite(h) || !(t < b)) return;
  if (Inside(t, lower[bottom], upper[bottom]) && Inside(b, lower[top], upper[top]) &&
      Inside(-h, lower[hill], upper[hill])) {
    params[bottom] = t;
    params[top] = b;
    params[hill] = -h;
  }
}

}  // namespace family_math
}  // namespace foothold
