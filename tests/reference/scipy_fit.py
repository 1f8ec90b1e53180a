#!/usr/bin/python3
"""Reference fits with Debian's python3-scipy for foothold's certification tests.

Fits a batch of problems, each one catalogue family on (x, y) data from a given start, with
scipy.optimize.least_squares(method='lm'), i.e. MINPACK's lmder, with analytic Jacobians and
xtol = ftol = gtol = 1e-15. The whole batch is one input file and one output file, so the
interpreter and scipy start once for all problems:

  input:  {"problems": [{"label": ..., "family": ..., "names": [...], "start": [...],
                         "x": [...], "y": [...]}, ...]}
  output: {"scipy_version": ..., "numpy_version": ...,
           "results": [{"label": ..., "family": ..., "parameters": [...], "rss": ...,
                        "nfev": ..., "njev": ..., "status": ..., "message": ...}, ...]}

The results are in the order of the problems. A problem with "names_only": true has its
family and parameter names checked and is not fitted (its result is {"label": ...,
"family": ..., "names_only": true}; "x" and "y" may be empty). A problem the script refuses
(an unknown family, a parameter-name list that differs from its own, sizes that disagree)
gets {"label": ..., "error": ...} instead, and the others are still fitted; an input file
that cannot be read at all is exit status 2.

The family formulas are written here independently of foothold's C++ code, in foothold's
catalogue parameter order (DESIGN.md section 3). The caller passes the parameter names it
expects; a mismatch with the names below is an error, so a change of the catalogue cannot
silently pair the wrong parameters.

Usage: scipy_fit.py --batch IN.json --output OUT.json
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


class Refused(Exception):
    """A problem the script will not fit; its message goes to the problem's result."""


def fit(problem):
    family = problem["family"]
    if family not in FAMILIES:
        raise Refused("unknown family '%s'" % family)
    function, expected_names = FAMILIES[family]
    start = np.array(problem["start"], dtype=np.float64)
    names = list(problem["names"])
    if expected_names is None:
        expected_names = ["c%d" % k for k in range(len(start))]
    if names != expected_names:
        raise Refused("parameter names %s differ from the script's %s" % (names, expected_names))
    if len(start) != len(names):
        raise Refused("start has %d values for %d parameters" % (len(start), len(names)))
    if problem.get("names_only", False):
        return {"family": family, "names_only": True}
    x = np.array(problem["x"], dtype=np.float64)
    y = np.array(problem["y"], dtype=np.float64)
    if x.shape != y.shape or x.ndim != 1:
        raise Refused("x has %d values and y %d" % (x.size, y.size))

    def residuals(p):
        return function(x, p)[0] - y

    def jacobian(p):
        return function(x, p)[1]

    result = scipy.optimize.least_squares(residuals, start, jac=jacobian, method="lm",
                                          xtol=1e-15, ftol=1e-15, gtol=1e-15,
                                          x_scale="jac", max_nfev=100000)
    return {
        "family": family,
        "parameters": [float(v) for v in result.x],
        "rss": float(np.sum(residuals(result.x) ** 2)),
        "nfev": int(result.nfev),
        "njev": int(result.njev) if result.njev is not None else 0,
        "status": int(result.status),
        "message": str(result.message),
    }


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--batch", required=True, help="input JSON file with the problems")
    parser.add_argument("--output", required=True, help="output JSON file for the results")
    args = parser.parse_args()

    try:
        with open(args.batch) as f:
            problems = json.load(f)["problems"]
    except (OSError, ValueError, KeyError, TypeError) as e:
        print("cannot read the batch %s: %s" % (args.batch, e), file=sys.stderr)
        sys.exit(2)

    results = []
    for problem in problems:
        label = problem.get("label", "")
        try:
            result = fit(problem)
        except (Refused, KeyError, TypeError, ValueError) as e:
            result = {"error": str(e)}
        results.append(dict({"label": label}, **result))
    with open(args.output, "w") as f:
        json.dump({"scipy_version": scipy.__version__, "numpy_version": np.__version__,
                   "results": results}, f)


if __name__ == "__main__":
    main()
