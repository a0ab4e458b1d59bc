#!/usr/bin/python3
"""End-to-end checks of `plotwright plan`, against R computed at test time.

Usage: plan_checks.py CASE PLOTWRIGHT

Cases:
  against-r    for CRD and RCBD questions, `plotwright plan --json` (replicates needed, and a proposed
               number with --replicates) against R 4.2.2 run here: the smallest r by R's pt with ncp at the
               design's error df, power.t.test(strict = TRUE) for two treatments in a CRD, pf with ncp for the
               F test (power.anova.test for the CRD).
  warning      the EPPO residual-df warning on stderr below 12 df, none at 12; exit codes for an unreachable
               power (1) and a refused option (1) and a misused command line (2).
"""
import json
import os
import shutil
import subprocess
import sys
import tempfile

from e2e_common import fail, run


# R: the same quantities as core/stats/power.hpp, written here from their definitions.
R_SCRIPT = r"""
args <- commandArgs(trailingOnly = TRUE)
design <- args[1]; t <- as.numeric(args[2]); cv <- as.numeric(args[3]); d <- as.numeric(args[4])
a <- as.numeric(args[5]); target <- as.numeric(args[6]); given <- as.numeric(args[7])
edf <- function(r) if (design == "crd") t * (r - 1) else (t - 1) * (r - 1)
tp <- function(r) { df <- edf(r); ncp <- d / (cv * sqrt(2 / r)); tc <- qt(1 - a / 2, df)
  pt(tc, df, ncp, lower.tail = FALSE) + pt(-tc, df, ncp) }
fp <- function(r) { df <- edf(r); pf(qf(1 - a, t - 1, df), t - 1, df, ncp = r * d^2 / (2 * cv^2), lower.tail = FALSE) }
r <- if (given > 0) given else { r <- 2; while (tp(r) < target) r <- r + 1; r }
f2 <- if (design == "crd") power.anova.test(groups = t, n = r, between.var = d^2 / (2 * (t - 1)),
                                            within.var = cv^2, sig.level = a)$power else fp(r)
t2 <- if (design == "crd" && t == 2) power.t.test(n = r, delta = d, sd = cv, sig.level = a, strict = TRUE)$power else tp(r)
cat(sprintf("%d %d %.17g %.17g %.17g %.17g\n", as.integer(r), as.integer(edf(r)), tp(r), fp(r), t2, f2))
"""


def r_reference(design, t, cv, d, a, power, given):
    rscript = shutil.which("Rscript")
    if not rscript:
        fail("Rscript (Debian package r-base-core) is needed as the reference")
    with tempfile.NamedTemporaryFile("w", suffix=".R", delete=False) as f:
        f.write(R_SCRIPT)
    try:
        out = run([rscript, f.name, design, t, cv, d, a, power, given or 0]).stdout.split()
    finally:
        os.unlink(f.name)
    return int(out[0]), int(out[1]), *map(float, out[2:])


def close(got, want, rel=None, abs_=None, what=""):
    tol = rel * abs(want) if rel is not None else abs_
    if abs(got - want) > tol:
        fail(f"{what}: plotwright {got!r}, R {want!r} (tolerance {tol})")


def against_r(exe):
    questions = [("crd", 2, 10, 15, 0.05, 0.8, None), ("rcbd", 4, 10, 15, 0.05, 0.8, None),
                 ("rcbd", 6, 12, 10, 0.05, 0.9, None), ("crd", 5, 15, 20, 0.01, 0.8, None),
                 ("rcbd", 4, 10, 15, 0.05, 0.8, 4), ("crd", 3, 8, 12, 0.1, 0.8, 5), ("crd", 2, 12, 20, 0.05, 0.8, 6)]
    for design, t, cv, d, a, power, given in questions:
        cmd = [exe, "plan", "--design", design, "--treatments", t, "--cv", cv, "--difference", d,
               "--alpha", a, "--power", power, "--json"]
        if given:
            cmd += ["--replicates", given]
        j = json.loads(run(cmd).stdout)
        r, df, tpow, fpow, tpow2, fpow2 = r_reference(design, t, cv, d, a, power, given)
        what = f"{design} t={t} cv={cv} d={d} alpha={a} power={power} replicates={given}"
        if j["replicates"] != r:
            fail(f"{what}: plotwright says {j['replicates']} replicates, R {r}")
        if j["error_df"] != df or j["pairwise_t"]["df"] != df or j["overall_f"]["df2"] != df:
            fail(f"{what}: error df {j['error_df']}, R {df}")
        close(j["pairwise_t"]["power"], tpow, rel=1e-8, what=what + " t power (pt)")
        close(j["pairwise_t"]["power"], tpow2, rel=1e-8, what=what + " t power (power.t.test or pt)")
        # R's noncentral F stops at an absolute error of 1e-9 (its noncentral beta).
        close(j["overall_f"]["power"], fpow, abs_=2e-9, what=what + " F power (pf)")
        close(j["overall_f"]["power"], fpow2, abs_=2e-9, what=what + " F power (power.anova.test or pf)")
        if j["power_reached"] != (tpow >= power):
            fail(f"{what}: power_reached {j['power_reached']}, R's power {tpow}")
    print(f"{len(questions)} plans agree with R")


def warning(exe):
    # EPPO PP 1/152(4) (2012): at least 12 residual df. RCBD, 4 treatments: 4 blocks give 9 df, 5 give 12.
    p = run([exe, "plan", "--design", "rcbd", "--treatments", 4, "--cv", 10, "--difference", 15, "--replicates", 4])
    for needle in ("9 residual degrees of freedom", "EPPO", "PP 1/152(4)", "5 replicates would give 12"):
        if needle not in p.stderr:
            fail(f"the warning lacks {needle!r}: {p.stderr!r}")
    p = run([exe, "plan", "--design", "rcbd", "--treatments", 4, "--cv", 10, "--difference", 15, "--replicates", 5])
    if "EPPO" in p.stderr:
        fail(f"a warning at 12 residual df: {p.stderr!r}")
    j = json.loads(run([exe, "plan", "--design", "crd", "--treatments", 4, "--cv", 10, "--difference", 15,
                        "--replicates", 3, "--json"]).stdout)
    if len(j["warnings"]) != 1 or "EPPO" not in j["warnings"][0]:
        fail(f"--json lacks the warning for 8 df: {j['warnings']!r}")
    p = run([exe, "plan", "--design", "rcbd", "--treatments", 3, "--cv", 30, "--difference", 0.5], expect=1)
    if "cannot be detected" not in p.stderr:
        fail(f"unreachable power not explained: {p.stderr!r}")
    p = run([exe, "plan", "--design", "rcbd", "--treatments", 1, "--cv", 10, "--difference", 15], expect=1)
    if "--treatments" not in p.stderr:
        fail(f"refusal does not name --treatments: {p.stderr!r}")
    run([exe, "plan", "--design", "latin", "--treatments", 4, "--cv", 10, "--difference", 15], expect=2)
    print("warning and exit codes as documented")


def main():
    if len(sys.argv) != 3:
        fail("usage: plan_checks.py CASE PLOTWRIGHT")
    case, exe = sys.argv[1], sys.argv[2]
    {"against-r": against_r, "warning": warning}[case](exe)


if __name__ == "__main__":
    main()
