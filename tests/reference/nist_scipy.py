#!/usr/bin/python3
"""The NIST StRD nonlinear problems fitted by Debian's python3-scipy, for comparison.

Runs scipy.optimize.least_squares(method='lm') (MINPACK lmder) on each of the 27 problems of
tests/data/nist-strd from Start 1 and Start 2, with xtol = ftol = gtol = 1e-15 and a
complex-step Jacobian (exact to rounding), and prints the same LRE table the C++ test
tests/certification/nist_strd_test.cpp prints for foothold. Standard deviations are
sqrt(diag((J^T J)^-1) * rss / dof), NIST's definition.

This is a reference for docs/certification.md, not a test: it asserts nothing.
Usage: /usr/bin/python3 tests/reference/nist_scipy.py [NIST_DIR]
"""

import json
import math
import os
import re
import sys

import numpy as np
import scipy
import scipy.optimize

MAX_LRE = 11.0


def lre(q, c):
    if not np.isfinite(q):
        return 0.0
    d = abs(q - c)
    if d == 0:
        return MAX_LRE
    rel = abs(q) if c == 0 else d / abs(c)
    return min(max(-math.log10(rel), 0.0), MAX_LRE)


def read_table(path):
    with open(path, newline="") as f:
        lines = [line.rstrip("\r\n") for line in f]
    first = last = None
    columns = None
    for line in lines:
        m = re.match(r"^\s*Data\s+\(lines\s+(\d+)\s+to\s+(\d+)\)", line)
        if m:
            first, last = int(m.group(1)), int(m.group(2))
        m = re.match(r"^\s*Data:\s+(y(\s+\w+)+)\s*$", line)
        if m:
            columns = m.group(1).split()
    rows = [[float(w) for w in lines[k - 1].split()] for k in range(first, last + 1)]
    return columns, np.array(rows)


def compile_model(text, predictors, num_params):
    # The grammar of index.json is foothold's; '^' is a power and atan the arctangent.
    source = text.replace("^", "**")
    names = {"exp": np.exp, "log": np.log, "cos": np.cos, "sin": np.sin,
             "atan": np.arctan, "pi": np.pi}
    code = compile(source, "<model>", "eval")

    def model(columns, b):
        scope = dict(names)
        scope.update({name: columns[name] for name in predictors})
        scope.update({"b%d" % (j + 1): b[j] for j in range(num_params)})
        return eval(code, {"__builtins__": {}}, scope)

    return model


def main():
    np.seterr(all="ignore")  # overflow on the way from a far start is expected
    directory = sys.argv[1] if len(sys.argv) > 1 else os.path.join(
        os.path.dirname(os.path.abspath(__file__)), "..", "data", "nist-strd")
    with open(os.path.join(directory, "index.json")) as f:
        index = json.load(f)
    print("NIST StRD nonlinear regression, scipy %s least_squares(method='lm'),"
          " complex-step Jacobian" % scipy.__version__)
    print("%-9s %5s %-7s %5s %7s %8s %7s  %s" % ("problem", "start", "diff.", "nfev", "LRE(b)",
                                                 "LRE(rss)", "LRE(sd)", "status"))
    for p in index:
        columns, table = read_table(os.path.join(directory, p["file"]))
        data = {name: table[:, k] for k, name in enumerate(columns)}
        y = data["y"] if p["response"] == "y" else np.log(data["y"])
        model = compile_model(p["model"], p["predictors"], p["n_params"])
        step = 1e-30

        def residuals(b):
            return model(data, b) - y

        def jacobian(b):
            jac = np.empty((len(y), len(b)))
            for j in range(len(b)):
                bc = np.array(b, dtype=complex)
                bc[j] += 1j * step
                jac[:, j] = np.imag(model(data, bc)) / step
            return jac

        for start_number, start in ((1, p["start1"]), (2, p["start2"])):
            try:
                r = scipy.optimize.least_squares(residuals, np.array(start, float), jac=jacobian,
                                                 method="lm", xtol=1e-15, ftol=1e-15, gtol=1e-15,
                                                 x_scale="jac", max_nfev=100000)
                b = r.x
                rss = float(np.sum(residuals(b) ** 2))
                jac = jacobian(b)
                cov = np.linalg.inv(jac.T @ jac) * rss / p["dof"]
                sd = np.sqrt(np.diag(cov))
                b_lre = min(lre(q, c) for q, c in zip(b, p["certified"]))
                sd_lre = min(lre(q, c) for q, c in zip(sd, p["certified_sd"]))
                rss_lre = lre(rss, p["certified_rss"])
                status = "status %d" % r.status
                nfev = r.nfev
            except Exception as e:  # a failed fit scores 0, as NIST scoring prescribes
                b_lre = rss_lre = sd_lre = 0.0
                status = "failed: %s" % e
                nfev = 0
            print("%-9s %5d %-7s %5d %7.1f %8.1f %7.1f  %s" % (
                p["name"], start_number, p["difficulty"], nfev, b_lre, rss_lre, sd_lre, status))


if __name__ == "__main__":
    main()
