#!/usr/bin/python3
"""Writes foothold's demo datasets: one night of a materials lab's fitting pipeline.

    /usr/bin/python3 scripts/generate_demo_data.py [--out DIR]

Standard library only. Every dataset draws its noise from its own random.Random seeded
with a fixed string, so the files are the same on every run and adding a dataset does not
change the others. Writes into DIR (default docs/examples/ of this repository):

  *.csv         the data, header "x,y" or "x,y,sigma"
  manifest.tsv  per dataset: the model to fit, a rough operator's start, bounds, and the
                sigma column; read by scripts/demo.sh
  truth.tsv     per dataset and parameter: the value the data were generated from
  README.md     what each dataset is, its true values, and how to regenerate
"""

import argparse
import math
import os
import random

SEED = "foothold-demo-2026"
GAS_CONSTANT = 8.314462618  # J/(mol K), as in the arrhenius family

# The baseline is written about 1.5 eV, inside the window: a + b*x with x near 1.5 would
# make a and b almost interchangeable (correlation close to -1).
PL_TWO_PEAKS = "h1*exp(-(x-c1)^2/(2*w1^2)) + h2*exp(-(x-c2)^2/(2*w2^2)) + a + b*(x-1.5)"
PL_THREE_PEAKS = (
    "h1*exp(-(x-c1)^2/(2*w1^2)) + h2*exp(-(x-c2)^2/(2*w2^2))"
    " + h3*exp(-(x-c3)^2/(2*w3^2)) + a + b*(x-1.5)"
)


def frange(start, stop, step):
    """Inclusive grid start, start+step, ..., stop without accumulated rounding."""
    count = int(round((stop - start) / step))
    return [start + i * step for i in range(count + 1)]


def poisson(rng, lam):
    """A Poisson count with mean lam.

    Knuth's multiplication method below 30; above, the normal approximation rounded to
    an integer (mean and variance lam), which is what a "Poisson-like" histogram needs.
    """
    if lam <= 0.0:
        return 0
    if lam < 30.0:
        limit = math.exp(-lam)
        count, product = 0, rng.random()
        while product > limit:
            count += 1
            product *= rng.random()
        return count
    return max(0, int(round(rng.gauss(lam, math.sqrt(lam)))))


def gauss_peak(x, height, center, width):
    return height * math.exp(-((x - center) ** 2) / (2.0 * width * width))


# --- the models, written exactly as the families and expressions define them -----------


def pl_spectrum(x, p):
    y = p["a"] + p["b"] * (x - 1.5)
    k = 1
    while "h%d" % k in p:
        y += gauss_peak(x, p["h%d" % k], p["c%d" % k], p["w%d" % k])
        k += 1
    return y


def biexp_decay(x, p):
    return (
        p["amplitude1"] * math.exp(-x / p["tau1"])
        + p["amplitude2"] * math.exp(-x / p["tau2"])
        + p["baseline"]
    )


def logistic4(x, p):
    return p["bottom"] + (p["top"] - p["bottom"]) / (
        1.0 + 10.0 ** ((p["log_ec50"] - x) * p["hill"])
    )


def damped_sine(x, p):
    return (
        p["amplitude"]
        * math.exp(-x / p["tau"])
        * math.sin(2.0 * math.pi * p["frequency"] * x + p["phase"])
        + p["baseline"]
    )


def arrhenius(x, p):
    return p["prefactor"] * math.exp(-p["ea"] / (GAS_CONSTANT * x))


# --- the datasets ----------------------------------------------------------------------


def make_pl(name, truth, noise_floor, noise_relative):
    rng = random.Random(SEED + ":" + name)
    rows = []
    for x in frange(1.36, 1.64, 0.001):
        clean = pl_spectrum(x, truth)
        noise = math.hypot(noise_floor, noise_relative * clean)
        rows.append((x, clean + rng.gauss(0.0, noise)))
    return rows


def make_lifetime(name, truth):
    rng = random.Random(SEED + ":" + name)
    rows = []
    for x in frange(0.0, 40.0, 0.08):
        counts = poisson(rng, biexp_decay(x, truth))
        rows.append((x, counts, math.sqrt(max(counts, 1))))
    return rows


def make_potency(name, truth, noise):
    rng = random.Random(SEED + ":" + name)
    rows = []
    for x in frange(-9.5, -4.0, 0.5):  # twelve half-log dilutions, 0.32 nM to 100 uM
        for _ in range(3):  # triplicate wells
            rows.append((x, logistic4(x, truth) + rng.gauss(0.0, noise)))
    return rows


def make_ringdown(name, truth, noise):
    rng = random.Random(SEED + ":" + name)
    return [(x, damped_sine(x, truth) + rng.gauss(0.0, noise)) for x in frange(0.0, 25.0, 0.05)]


def make_arrhenius(name, truth, relative):
    rng = random.Random(SEED + ":" + name)
    rows = []
    for x in frange(450.0, 650.0, 10.0):
        k = arrhenius(x, truth) * (1.0 + rng.gauss(0.0, relative))
        rows.append((x, k, relative * k))  # the lab quotes sigma as a share of the reading
    return rows


def datasets():
    """Each entry: file, what it is, model spec, true values, rough start, data rows."""
    pl_bounds_2 = "h1=0:inf,w1=0.001:0.2,h2=0:inf,w2=0.001:0.2"
    pl_bounds_3 = pl_bounds_2 + ",h3=0:inf,w3=0.001:0.2"
    out = []

    def pl(file, position, truth, start, expression, bounds):
        out.append({
            "file": file,
            "title": "Photoluminescence, wafer W17, %s" % position,
            "about": "PL spectrum at the %s of wafer W17: x photon energy (eV), y detector "
                     "counts (thousands). Band-edge and defect peaks overlap on a sloped "
                     "baseline a + b*(x - 1.5), a being its height at 1.5 eV." % position,
            "expression": expression,
            "parameters": list(truth),
            "truth": truth,
            "start": start,
            "bounds": bounds,
            "rows": make_pl(file, truth, 0.10, 0.01),
        })

    pl("pl_w17_center.csv", "centre",
       {"h1": 12.0, "c1": 1.512, "w1": 0.018, "h2": 4.5, "c2": 1.478, "w2": 0.028,
        "a": 0.55, "b": -0.9},
       {"h1": 10, "c1": 1.51, "w1": 0.02, "h2": 5, "c2": 1.48, "w2": 0.02, "a": 0.5, "b": 0},
       PL_TWO_PEAKS, pl_bounds_2)
    pl("pl_w17_mid.csv", "mid-radius",
       {"h1": 9.1, "c1": 1.509, "w1": 0.020, "h2": 6.2, "c2": 1.471, "w2": 0.031,
        "a": 0.65, "b": -1.1},
       {"h1": 9, "c1": 1.51, "w1": 0.02, "h2": 6, "c2": 1.47, "w2": 0.02, "a": 0.5, "b": 0},
       PL_TWO_PEAKS, pl_bounds_2)
    pl("pl_w17_edge.csv", "edge",
       {"h1": 6.4, "c1": 1.503, "w1": 0.022, "h2": 7.3, "c2": 1.466, "w2": 0.030,
        "h3": 2.6, "c3": 1.415, "w3": 0.040, "a": 0.65, "b": -1.3},
       {"h1": 6, "c1": 1.50, "w1": 0.02, "h2": 7, "c2": 1.47, "w2": 0.02, "h3": 2,
        "c3": 1.42, "w3": 0.03, "a": 0.5, "b": 0},
       PL_THREE_PEAKS, pl_bounds_3)

    def lifetime(file, site, truth, start):
        out.append({
            "file": file,
            "title": "Fluorescence lifetime, %s" % site,
            "about": "Time-correlated photon counting histogram at %s: x delay after the "
                     "laser pulse (ns), y counts per 80 ps bin with Poisson-like noise, "
                     "sigma = sqrt(counts) (1 for empty bins)." % site,
            "family": "biexp_decay",
            "parameters": list(truth),
            "truth": truth,
            "start": start,
            "sigma_column": "sigma",
            "rows": make_lifetime(file, truth),
        })

    lifetime("lifetime_site_a.csv", "site A",
             {"amplitude1": 8200.0, "tau1": 0.85, "amplitude2": 1900.0, "tau2": 4.3,
              "baseline": 15.0},
             {"amplitude1": 5000, "tau1": 0.5, "amplitude2": 1000, "tau2": 3, "baseline": 10})
    lifetime("lifetime_site_b.csv", "site B",
             {"amplitude1": 4300.0, "tau1": 1.7, "amplitude2": 3600.0, "tau2": 7.9,
              "baseline": 22.0},
             {"amplitude1": 3000, "tau1": 1, "amplitude2": 3000, "tau2": 5, "baseline": 10})

    def potency(file, compound, truth, start):
        out.append({
            "file": file,
            "title": "Inhibitor potency, %s" % compound,
            "about": "Enzyme activity against %s: x log10 molar concentration (twelve "
                     "half-log steps, triplicate wells), y activity in percent of the "
                     "untreated control, noise 3 points." % compound,
            "family": "logistic4",
            "parameters": list(truth),
            "truth": truth,
            "start": start,
            # An inhibitor lowers activity: a negative hill slope. Without this bound the
            # mirror curve (bottom and top swapped, hill of opposite sign) fits as well.
            "bounds": "hill=-10:0",
            "rows": make_potency(file, truth, 3.0),
        })

    potency("potency_compound_a.csv", "compound FH-201",
            {"bottom": 3.5, "top": 98.5, "log_ec50": -6.82, "hill": -1.15},
            {"bottom": 0, "top": 100, "log_ec50": -7, "hill": -1})
    potency("potency_compound_b.csv", "compound FH-318 (partial, shallow)",
            {"bottom": 12.0, "top": 101.0, "log_ec50": -5.35, "hill": -0.75},
            {"bottom": 0, "top": 100, "log_ec50": -6, "hill": -1})
    out[-1]["note"] = (
        "The bottom plateau is never reached, so bottom is poorly determined. The "
        "residual-sign runs test fires on this file (p < 0.01) although the model is the "
        "one the data came from: at that level about one honest fit in a hundred is "
        "flagged by chance. A flag says look at the residuals, not that the model is wrong.")

    ringdown_truth = {"amplitude": 48.0, "tau": 6.2, "frequency": 0.853, "phase": 0.6,
                      "baseline": 0.8}
    out.append({
        "file": "ringdown_cantilever.csv",
        "title": "Cantilever ring-down",
        "about": "Free decay of a test cantilever after the drive is switched off: x time "
                 "(ms), y tip deflection (nm), frequency in kHz (cycles per ms), noise "
                 "0.6 nm, sampled at 20 kHz (the bounds keep the frequency below the 10 kHz "
                 "Nyquist limit, where its aliases would fit equally well).",
        "family": "damped_sine",
        "parameters": list(ringdown_truth),
        "truth": ringdown_truth,
        "start": {"amplitude": 40, "tau": 5, "frequency": 0.85, "phase": 0, "baseline": 0},
        # Sampled at 20 kHz: frequencies above the 10 kHz Nyquist limit are aliases that fit
        # exactly as well, and so are a negative amplitude or a phase shifted by 2*pi.
        "bounds": "amplitude=0:inf,frequency=0:10,phase=-3.1416:3.1416",
        "rows": make_ringdown("ringdown_cantilever.csv", ringdown_truth, 0.6),
    })

    arrhenius_truth = {"prefactor": 2.4e9, "ea": 86500.0}
    out.append({
        "file": "arrhenius_catalyst.csv",
        "title": "Catalyst rate constants against temperature",
        "about": "First-order rate constant of a supported catalyst from 450 K to 650 K: "
                 "x temperature (K), y rate constant (1/s), 4 % relative noise, sigma "
                 "quoted as 4 % of each reading.",
        "family": "arrhenius",
        "parameters": list(arrhenius_truth),
        "truth": arrhenius_truth,
        "start": {"prefactor": 1e9, "ea": 80000},
        "sigma_column": "sigma",
        "rows": make_arrhenius("arrhenius_catalyst.csv", arrhenius_truth, 0.04),
    })
    return out


# --- writing ---------------------------------------------------------------------------


def number(value):
    """Shortest text that keeps six significant digits; integers stay integers."""
    if isinstance(value, int):
        return str(value)
    text = "%.6g" % value
    return text


def write_csv(path, rows):
    with open(path, "w", encoding="utf-8", newline="\n") as out:
        out.write("x,y,sigma\n" if len(rows[0]) == 3 else "x,y\n")
        for row in rows:
            out.write(",".join(number(v) for v in row) + "\n")


def assignments(values):
    return ",".join("%s=%s" % (name, number(v)) for name, v in values.items())


MANIFEST_COLUMNS = ["file", "family", "peaks", "expression", "parameters", "start",
                    "bounds", "sigma_column", "title"]


def write_manifest(path, items):
    with open(path, "w", encoding="utf-8", newline="\n") as out:
        out.write("# Demo datasets and how to fit them; written by scripts/generate_demo_data.py.\n")
        out.write("# Tab-separated; '-' marks an empty field. The start is a rough operator's\n")
        out.write("# guess read off a plot, not the truth (that is in truth.tsv).\n")
        out.write("\t".join(MANIFEST_COLUMNS) + "\n")
        for item in items:
            fields = {
                "file": item["file"],
                "family": item.get("family", "-"),
                "peaks": str(item.get("peaks", "-")),
                "expression": item.get("expression", "-"),
                "parameters": ",".join(item["parameters"]) if "expression" in item else "-",
                "start": assignments(item["start"]),
                "bounds": item.get("bounds", "-"),
                "sigma_column": item.get("sigma_column", "-"),
                "title": item["title"],
            }
            out.write("\t".join(fields[c] for c in MANIFEST_COLUMNS) + "\n")


def write_truth(path, items):
    with open(path, "w", encoding="utf-8", newline="\n") as out:
        out.write("# The parameter values each demo dataset was generated from.\n")
        out.write("file\tparameter\tvalue\n")
        for item in items:
            for name, value in item["truth"].items():
                out.write("%s\t%s\t%s\n" % (item["file"], name, repr(float(value))))


README_HEAD = """\
# Demo data: one night of a materials lab's pipeline

Invented data for foothold's demo and tests. The scenario: a materials lab runs its
instruments overnight and a pipeline sends every curve to foothold — photoluminescence
spectra from a wafer map, fluorescence lifetime traces, an inhibitor potency plate, a
cantilever ring-down and a catalyst temperature series. Nothing here was measured; every
file comes from `scripts/generate_demo_data.py` with a fixed seed (`{seed}`).

Regenerate (the output is identical on every run):

```
/usr/bin/python3 scripts/generate_demo_data.py
```

Files:

- `*.csv` — the data; header `x,y` or `x,y,sigma` (sigma is an absolute standard
  deviation per point).
- `manifest.tsv` — for each dataset the model to fit, a rough operator's start (read off a
  plot, deliberately not the truth), bounds and the sigma column. `scripts/demo.sh` fits
  every row of it.
- `truth.tsv` — the parameter values each dataset was generated from.

Fit one by hand, for example:

```
build/server/foothold fit docs/examples/lifetime_site_a.csv --family biexp_decay \\
    --sigma-column sigma --start amplitude1=5000,tau1=0.5,amplitude2=1000,tau2=3,baseline=10
```

A fit recovers the truth only to within its uncertainty: the noise is real noise, so
expect the estimates within a few standard errors of the values below, not equal to them.
"""


def write_readme(path, items):
    with open(path, "w", encoding="utf-8", newline="\n") as out:
        out.write(README_HEAD.format(seed=SEED))
        for item in items:
            out.write("\n## %s — `%s`\n\n" % (item["title"], item["file"]))
            out.write(item["about"] + " %d points.\n\n" % len(item["rows"]))
            if "expression" in item:
                out.write("Model: expression `%s` with parameters %s.\n\n" % (
                    item["expression"], ", ".join(item["parameters"])))
            else:
                out.write("Model: family `%s`.\n\n" % item["family"])
            out.write("| parameter | true value | operator's start |\n|---|---|---|\n")
            for name, value in item["truth"].items():
                out.write("| %s | %s | %s |\n" % (name, number(value), number(item["start"][name])))
            if "bounds" in item:
                out.write("\nBounds: `%s`.\n" % item["bounds"])
            if "note" in item:
                out.write("\n" + item["note"] + "\n")


def main():
    here = os.path.dirname(os.path.abspath(__file__))
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--out", default=os.path.join(here, "..", "docs", "examples"),
                        help="output folder (default: docs/examples)")
    args = parser.parse_args()
    os.makedirs(args.out, exist_ok=True)
    items = datasets()
    for item in items:
        write_csv(os.path.join(args.out, item["file"]), item["rows"])
    write_manifest(os.path.join(args.out, "manifest.tsv"), items)
    write_truth(os.path.join(args.out, "truth.tsv"), items)
    write_readme(os.path.join(args.out, "README.md"), items)
    print("wrote %d datasets to %s" % (len(items), os.path.normpath(args.out)))


if __name__ == "__main__":
    main()
