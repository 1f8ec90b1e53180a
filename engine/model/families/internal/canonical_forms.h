#pragma once
// Building blocks of Model::CanonicalizeParameters for the closed-form families: each
// applies one curve-preserving transformation only when its image stays inside the bounds.

namespace foothold {
namespace family_math {

constexpr double kPi = 3.14159265358979323846;

// True when lower <= value <= upper (false for NaN).
bool Inside(double value, double lower, double upper);

// The canonical member of {value + k * period} inside [lower, upper] into *out: the one in
// [-period/2, period/2) when that window fits the bounds, else the smallest member >= lower,
// else (lower = -inf) the largest member <= upper. False when value is not finite or no
// member lies inside the bounds. A value already in its window is returned unchanged.
bool WrapPeriodic(double value, double period, double lower, double upper, double* out);

// A parameter that enters the model only squared (a peak width): makes it >= 0 when its
// negative is inside the bounds.
void CanonicalizeEvenSign(int index, const double* lower, const double* upper, double* params);

// A*sin(2*pi*f*x + phase): (A, f, phase) ~ (-A, -f, -phase) ~ (-A, f, phase + pi) and phase is
// periodic with 2*pi. Canonical: f >= 0, then A >= 0, then phase wrapped (WrapPeriodic),
// each step only when the changed parameters stay inside the bounds.
void CanonicalizeOscillation(int amplitude, int frequency, int phase, const double* lower,
                             const double* upper, double* params);

// bottom + (top - bottom)/(1 + 10^((c - x)*hill)) equals the same with (top, bottom, -hill):
// canonical top >= bottom (the named "top" is the higher plateau), when inside the bounds.
void CanonicalizePlateaus(int bottom, int top, int hill, const double* lower, const double* upper,
                          double* params);

}  // namespace family_math
}  // namespace foothold
