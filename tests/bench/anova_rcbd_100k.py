#!/usr/bin/python3
"""Benchmark (not a test; ctest does not run it): the RCBD analysis of variance of one trait on 100,000 plots,
plotwright against R 4.2.2 and statsmodels on the same CSV, run one after the other on this machine.

Usage: tests/bench/anova_rcbd_100k.py PLOTWRIGHT [WORKDIR] [--blocks 250 --treatments 400]

The trial: 250 blocks x 400 treatments = 100,000 plots (the shape with the fewest model columns for that many
plots: p = 1 + 249 + 399), yields invented with Python's random.Random(20260614): block and treatment effects
plus N(0, 1) noise, written with 3 decimals. Each tool reads the CSV and fits y ~ block + treatment:
  plotwright analyze --csv FILE --design rcbd --block block --treatment treatment --response y --json
  Rscript -e 'd <- read.csv(FILE, ...); anova(lm(y ~ block + treatment, data = d))'
  /usr/bin/python3 statsmodels: anova_lm(ols("y ~ C(block) + C(treatment)", d).fit())  (type I)
Reported: wall-clock seconds of each whole command (best of --repeat runs), the time each spends fitting (the
tool's own timer around the fit, reading excluded; plotwright's whole command includes means, standard errors
and adjusted sums of squares besides), the ratios, and the treatment SS of each (they must agree to 1e-9).
"""
import argparse
import json
import pathlib
import random
import subprocess
import sys
import time


def write_trial(path, blocks, treatments, seed=20260614):
    rng = random.Random(seed)
    beff = [rng.gauss(0, 2) for _ in range(blocks)]
    teff = [rng.gauss(0, 1) for _ in range(treatments)]
    with open(path, "w") as f:
        f.write("block,treatment,y\n")
        for b in range(blocks):
            for t in range(treatments):
                f.write(f"B{b + 1},T{t + 1},{50 + beff[b] + teff[t] + rng.gauss(0, 1):.3f}\n")


def timed(args):
    t0 = time.perf_counter()
    p = subprocess.run(args, capture_output=True, text=True)
    dt = time.perf_counter() - t0
    if p.returncode != 0:
        sys.exit(f"{args[0]} failed:\n{p.stderr}")
    return dt, p.stdout


R_SCRIPT = r'''
args <- commandArgs(TRUE)
d <- read.csv(args[1], colClasses = c("factor", "factor", "numeric"))
t <- system.time(a <- anova(lm(y ~ block + treatment, data = d)))[["elapsed"]]
cat(sprintf("%.17g", a$`Sum Sq`[2]), t, "\n")
'''

PY_SCRIPT = r'''
import sys, time
import pandas as pd
from statsmodels.formula.api import ols
from statsmodels.stats.anova import anova_lm
d = pd.read_csv(sys.argv[1], dtype={"block": str, "treatment": str})
t0 = time.perf_counter()
a = anova_lm(ols("y ~ C(block) + C(treatment)", data=d).fit(), typ=1)
t = time.perf_counter() - t0
print(repr(a["sum_sq"].iloc[1]), t)
'''


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("plotwright")
    ap.add_argument("workdir", nargs="?", default="bench-anova")
    ap.add_argument("--blocks", type=int, default=250)
    ap.add_argument("--treatments", type=int, default=400)
    ap.add_argument("--repeat", type=int, default=1)
    ap.add_argument("--skip-statsmodels", action="store_true")
    a = ap.parse_args()
    work = pathlib.Path(a.workdir)
    work.mkdir(parents=True, exist_ok=True)
    data = work / "rcbd.csv"
    write_trial(data, a.blocks, a.treatments)
    (work / "fit.R").write_text(R_SCRIPT)
    (work / "fit.py").write_text(PY_SCRIPT)
    print(f"{a.blocks} blocks x {a.treatments} treatments = {a.blocks * a.treatments} plots ({data})")

    results = {}
    pw_cmd = [a.plotwright, "analyze", "--csv", str(data), "--design", "rcbd", "--block", "block", "--treatment",
              "treatment", "--response", "y", "--json"]
    runs = [timed(pw_cmd) for _ in range(a.repeat)]
    wall, out = min(runs, key=lambda r: r[0])
    ss = next(r["ss"] for r in json.loads(out)["anova"] if r["source"] == "treatment")
    results["plotwright"] = (wall, None, ss)
    runs = [timed(["Rscript", "--vanilla", str(work / "fit.R"), str(data)]) for _ in range(a.repeat)]
    wall, out = min(runs, key=lambda r: r[0])
    ss, fit = map(float, out.split())
    results["R 4.2.2 lm + anova"] = (wall, fit, ss)
    if not a.skip_statsmodels:
        runs = [timed(["/usr/bin/python3", str(work / "fit.py"), str(data)]) for _ in range(a.repeat)]
        wall, out = min(runs, key=lambda r: r[0])
        ss, fit = map(float, out.split())
        results["statsmodels ols + anova_lm"] = (wall, fit, ss)

    base = results["plotwright"][0]
    ref = results["R 4.2.2 lm + anova"][2]
    print(f"{'tool':30} {'whole command s':>16} {'fit s':>10} {'ratio to plotwright':>20}  treatment SS")
    for name, (wall, fit, ss) in results.items():
        print(f"{name:30} {wall:16.2f} {'' if fit is None else f'{fit:.2f}':>10} {wall / base:20.1f}  {ss:.12g}")
        if abs(ss - ref) > 1e-9 * abs(ref):
            sys.exit(f"{name}: treatment SS {ss!r} differs from R's {ref!r}")


if __name__ == "__main__":
    main()
