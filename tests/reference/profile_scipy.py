#!/usr/bin/python3
"""Reference profile-likelihood intervals with Debian's python3-scipy.

Written independently of foothold's C++ code, for tests/engine/profile_likelihood_test.cpp,
which holds the printed numbers. For each case the optimum comes from
scipy.optimize.least_squares(method='lm') with analytic Jacobians; each profile point holds
one parameter fixed and refits the others the same way (warm-started from the optimum); the
interval ends are the roots of S_profile(theta) - threshold found by scipy.optimize.brentq
between the estimate and the first of estimate +- k * se (k = 1, 2, 4, ...) above the
threshold.

Thresholds: absolute sigma, S_min + chi2.ppf(0.95, 1); estimated scale,
S_min * (1 + f.ppf(0.95, 1, dof) / dof).

The data are noiseless curves plus a deterministic pseudo-noise (a sine of the point index)
so that the C++ test rebuilds them exactly.

Usage: /usr/bin/python3 tests/reference/profile_scipy.py
"""

import json

import numpy as np
import scipy
import scipy.optimize
import scipy.stats

# The family formulas and Jacobians are those the SciPy reference fits use (same folder).
from scipy_fit import exp_decay, gaussian

LEVEL = 0.95
TOL = dict(xtol=1e-15, ftol=1e-15, gtol=1e-15, max_nfev=100000)


def exp_decay_case():
    # 40 points, x = 0.25 i; truth (5, 2, 0.5); pseudo-noise 0.4 sin(2.4 i + 0.3); no sigma.
    i = np.arange(40)
    x = 0.25 * i
    y = exp_decay(x, [5.0, 2.0, 0.5])[0] + 0.4 * np.sin(2.4 * i + 0.3)
    return dict(name="exp_decay", model=exp_decay, x=x, y=y, sigma=None,
                start=[5.0, 2.0, 0.5])


def gaussian_case():
    # 41 points, x = 0.25 i; truth (3, 5, 0.8, 0.5); pseudo-noise 0.4 sin(2.3 i + 1);
    # absolute sigma 0.3 at every point.
    i = np.arange(41)
    x = 0.25 * i
    y = gaussian(x, [3.0, 5.0, 0.8, 0.5])[0] + 0.4 * np.sin(2.3 * i + 1.0)
    return dict(name="gaussian", model=gaussian, x=x, y=y, sigma=np.full(41, 0.3),
                start=[3.0, 5.0, 0.8, 0.5])


def fit(case, start, fixed=None):
    """Least squares over the free parameters; returns the full vector and the cost."""
    x, y, model = case["x"], case["y"], case["model"]
    w = 1.0 / case["sigma"] if case["sigma"] is not None else np.ones_like(x)
    start = np.asarray(start, dtype=float)
    free = [k for k in range(len(start)) if fixed is None or k != fixed[0]]

    def full(q):
        p = start.copy()
        p[free] = q
        if fixed is not None:
            p[fixed[0]] = fixed[1]
        return p

    def residual(q):
        return w * (model(x, full(q))[0] - y)

    def jacobian(q):
        return w[:, None] * model(x, full(q))[1][:, free]

    result = scipy.optimize.least_squares(residual, start[free], jac=jacobian, method="lm", **TOL)
    return full(result.x), float(np.sum(result.fun ** 2)), result


def profile(case):
    best, s_min, result = fit(case, case["start"])
    n, p = len(case["x"]), len(best)
    dof = n - p
    absolute = case["sigma"] is not None
    jac = result.jac
    cov = np.linalg.inv(jac.T @ jac)
    if absolute:
        increase = scipy.stats.chi2.ppf(LEVEL, 1)
    else:
        increase = s_min * scipy.stats.f.ppf(LEVEL, 1, dof) / dof
        cov = cov * s_min / dof
    threshold = s_min + increase
    se = np.sqrt(np.diag(cov))
    ends = []
    for j in range(p):
        def excess(value):
            return fit(case, best, fixed=(j, value))[1] - threshold

        pair = []
        for direction in (-1, 1):
            k = 1.0
            while excess(best[j] + direction * k * se[j]) < 0:
                k *= 2
            outer = best[j] + direction * k * se[j]
            pair.append(scipy.optimize.brentq(excess, min(best[j], outer), max(best[j], outer),
                                              xtol=1e-13, rtol=1e-13))
        ends.append(pair)
    return dict(case=case["name"], optimum=best.tolist(), rss=s_min, cost_increase=increase,
                standard_errors=se.tolist(), profile=ends)


def main():
    report = dict(scipy_version=scipy.__version__, numpy_version=np.__version__,
                  cases=[profile(exp_decay_case()), profile(gaussian_case())])
    print(json.dumps(report, indent=1))


if __name__ == "__main__":
    main()
