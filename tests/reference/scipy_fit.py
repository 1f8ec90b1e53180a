#!/usr/bin/python3
"""Reference fit with Debian's python3-scipy for foothold's certification tests.

Fits one catalogue family to a CSV file (header "x,y", one point a row) from a given start
with scipy.optimize.least_squares(method='lm'), i.e. MINPACK's lmder, with analytic
Jacobians and xtol = ftol = gtol = 1e-15, and prints one JSON object on stdout:

  {"family": ..., "parameters": [...], "rss": ..., "nfev": ..., "njev": ...,
   "status": ..., "message": ..., "scipy_version": ..., "numpy_version": ...}

The family formulas are written here independently of foothold's C++ code, in foothold's
catalogue parameter order (DESIGN.md section 3). The caller passes the parameter names it
expects; a mismatch with the names below is an error (exit status 2), so a change of the
catalogue cannot silently pair the wrong parameters.

Usage: scipy_fit.py --family NAME --data FILE.csv --start v1,v2,... --names n1,n2,...
Run it with /usr/bin/python3 (the interpreter that has numpy and scipy).
"""

import argparse
import json
import sys

import numpy as np
import scipy
import scipy.optimize

LN10 = np.log(10.0)


def line(x, p):
    slope, intercept = p
    f = slope * x + intercept
    jac = np.column_stack([x, np.ones_like(x)])
    return f, jac


def polynomial(x, p):
    # Sum of c_k x^k, k = 0 .. degree.
    powers = np.column_stack([x ** k for k in range(len(p))])
    return powers @ np.asarray(p), powers


def gaussian(x, p):
    height, center, sigma, baseline = p
    u = (x - center) / sigma
    g = np.exp(-0.5 * u * u)
    f = height * g + baseline
    jac = np.column_stack([g, height * g * u / sigma, height * g * u * u / sigma,
                           np.ones_like(x)])
    return f, jac


def lorentzian(x, p):
    height, center, hwhm, baseline = p
    d = x - center
    den = d * d + hwhm * hwhm
    lor = hwhm * hwhm / den
    f = height * lor + baseline
    d_center = height * hwhm * hwhm * 2.0 * d / (den * den)
    d_hwhm = height * 2.0 * hwhm * d * d / (den * den)
    jac = np.column_stack([lor, d_center, d_hwhm, np.ones_like(x)])
    return f, jac


def exp_decay(x, p):
    amplitude, tau, baseline = p
    e = np.exp(-x / tau)
    f = amplitude * e + baseline
    jac = np.column_stack([e, amplitude * e * x / (tau * tau), np.ones_like(x)])
    return f, jac


def logistic4(x, p):
    bottom, top, log_ec50, hill = p
    t = (log_ec50 - x) * hill
    q = 10.0 ** t
    den = 1.0 + q
    f = bottom + (top - bottom) / den
    # d f / d t = -(top - bottom) q ln10 / den^2
    dfdt = -(top - bottom) * q * LN10 / (den * den)
    jac = np.column_stack([1.0 - 1.0 / den, 1.0 / den, dfdt * hill, dfdt * (log_ec50 - x)])
    return f, jac


def michaelis_menten(x, p):
    vmax, km = p
    den = km + x
    f = vmax * x / den
    jac = np.column_stack([x / den, -vmax * x / (den * den)])
    return f, jac


def power_law(x, p):
    prefactor, exponent = p
    xk = x ** exponent
    f = prefactor * xk
    jac = np.column_stack([xk, prefactor * xk * np.log(x)])
    return f, jac


FAMILIES = {
    "line": (line, ["slope", "intercept"]),
    "polynomial": (polynomial, None),  # c0 .. cd, checked below
    "gaussian": (gaussian, ["height", "center", "sigma", "baseline"]),
    "lorentzian": (lorentzian, ["height", "center", "hwhm", "baseline"]),
    "exp_decay": (exp_decay, ["amplitude", "tau", "baseline"]),
    "logistic4": (logistic4, ["bottom", "top", "log_ec50", "hill"]),
    "michaelis_menten": (michaelis_menten, ["vmax", "km"]),
    "power_law": (power_law, ["prefactor", "exponent"]),
}


def fail(message):
    print(json.dumps({"error": message}))
    sys.exit(2)


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--family", required=True)
    parser.add_argument("--data", required=True)
    parser.add_argument("--start", required=True)
    parser.add_argument("--names", required=True)
    args = parser.parse_args()

    if args.family not in FAMILIES:
        fail("unknown family '%s'" % args.family)
    function, expected_names = FAMILIES[args.family]
    start = np.array([float(v) for v in args.start.split(",")])
    names = args.names.split(",")
    if expected_names is None:
        expected_names = ["c%d" % k for k in range(len(start))]
    if names != expected_names:
        fail("parameter names %s differ from the script's %s" % (names, expected_names))
    if len(start) != len(names):
        fail("start has %d values for %d parameters" % (len(start), len(names)))

    table = np.loadtxt(args.data, delimiter=",", skiprows=1, dtype=np.float64, ndmin=2)
    x, y = table[:, 0], table[:, 1]

    def residuals(p):
        return function(x, p)[0] - y

    def jacobian(p):
        return function(x, p)[1]

    result = scipy.optimize.least_squares(residuals, start, jac=jacobian, method="lm",
                                          xtol=1e-15, ftol=1e-15, gtol=1e-15,
                                          x_scale="jac", max_nfev=100000)
    rss = float(np.sum(residuals(result.x) ** 2))
    print(json.dumps({
        "family": args.family,
        "parameters": [float(v) for v in result.x],
        "rss": rss,
        "nfev": int(result.nfev),
        "njev": int(result.njev) if result.njev is not None else 0,
        "status": int(result.status),
        "message": str(result.message),
        "scipy_version": scipy.__version__,
        "numpy_version": np.__version__,
    }))


if __name__ == "__main__":
    main()
