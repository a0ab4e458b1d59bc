#!/usr/bin/python3
"""End-to-end checks of `plotwright analyze` against R run live (R 4.2.2, `Rscript`, package MASS).

Usage:
  analyze_checks.py csv CASE PLOTWRIGHT DATADIR WORKDIR    a CSV of tests/data/stats/designs or r-classic
  analyze_checks.py db LAYOUT PLOTWRIGHT WORKDIR           a worked example of layouts/: designed, every plot
                                                           but one recorded, analysed from the database

Each case runs the real executable with --json, then fits the design's model in R (aov with Error() strata
for split and strip plots, lm with the terms in the same order otherwise) on the same data, and requires
every ANOVA row (df, SS, F, p) to agree to 9 significant digits (p to 1e-8 relative, or 1e-300 absolute).
For the single-stratum designs of `db` (all but split and strip plots), each recorded plot's leverage and
standardized residual must be R's hatvalues and rstandard of the same lm fit (to 1e-9 absolute; rstandard
to 1e-7 relative), and none where the leverage is 1.
Exit 77 (ctest SKIP_RETURN_CODE) when Rscript is not installed.
"""
import csv
import io
import json
import math
import pathlib
import shutil
import subprocess
import sys
import tomllib

from e2e_common import fail, run

SKIP = 77
TOL = 1e-9


# R prints one line per ANOVA row: term, df, SS, F, p (NA where absent), doubles with %.17g.
R_ROWS = r'''
emit <- function(tab, rename = identity) {
  for (i in seq_len(nrow(tab))) {
    cat(rename(trimws(rownames(tab)[i])), tab$Df[i], sprintf("%.17g", tab$`Sum Sq`[i]),
        sprintf("%.17g", tab$`F value`[i]), sprintf("%.17g", tab$`Pr(>F)`[i]), sep = "\t")
    cat("\n")
  }
}
# One line per plot of a single-stratum fit: leverage (hatvalues) and standardized residual (rstandard).
emit_plots <- function(m, d) {
  cat(sprintf("H\t%s\t%.17g\t%.17g\n", as.character(d$plot), hatvalues(m), rstandard(m)), sep = "")
}
'''


def r_rows(script, workdir, plots=None):
    """R's ANOVA rows by term; R's per-plot lines (emit_plots) go into `plots` when given."""
    path = workdir / "model.R"
    path.write_text(R_ROWS + script)
    p = run(["Rscript", "--vanilla", path])
    rows = {}
    for line in p.stdout.strip().splitlines():
        if line.startswith("H\t"):
            _, plot, h, rs = line.split("\t")
            plots[plot] = (float(h), float(rs))
            continue
        term, df, ss, f, pv = line.split("\t")
        val = lambda s: None if s in ("NA", "NaN") else float(s)
        rows[term] = {"df": int(df), "ss": val(ss), "f": val(f), "p": val(pv)}
    return rows


def compare_plots(result, rplots):
    """Each recorded plot's leverage and standardized residual against R's hatvalues and rstandard (R 4.2.2).
    R gives NaN (0/0) or an infinite rstandard where the leverage is 1; plotwright gives none (null)."""
    n = 0
    for p in result["plots"]:
        if p["y"] is None:
            continue
        h, rs = rplots[str(p["plot"])]
        if abs(p["leverage"] - h) > 1e-9:
            fail(f"plot {p['plot']}: leverage {p['leverage']!r}, R hatvalues {h!r}")
        if not math.isfinite(rs) or abs(1 - h) < 1e-9:
            if p["standardized_residual"] is not None:
                fail(f"plot {p['plot']}: leverage 1, expected no standardized residual, got {p['standardized_residual']!r}")
        elif p["standardized_residual"] is None or not close(p["standardized_residual"], rs, 1e-7) and \
                abs(p["standardized_residual"] - rs) > 1e-9:
            fail(f"plot {p['plot']}: standardized residual {p['standardized_residual']!r}, R rstandard {rs!r}")
        n += 1
    if n != len(rplots):
        fail(f"compared {n} plots, R fitted {len(rplots)}")
    print(f"ok: leverage and standardized residual of {n} plots as R's hatvalues and rstandard")


def close(got, want, tol):
    return abs(got - want) <= tol * abs(want) or abs(got - want) <= 1e-300


def compare(result, rrows, mapping):
    """mapping: our source -> R term (rows of ours not named are not compared)."""
    ours = {r["source"]: r for r in result["anova"]}
    for source, term in mapping.items():
        if source not in ours:
            fail(f"plotwright has no row {source!r}; rows: {list(ours)}")
        if term not in rrows:
            fail(f"R has no row {term!r}; rows: {list(rrows)}")
        a, b = ours[source], rrows[term]
        if a["df"] != b["df"] or not close(a["ss"], b["ss"], TOL):
            fail(f"{source}: df {a['df']} SS {a['ss']!r}, R {term}: df {b['df']} SS {b['ss']!r}")
        if b["f"] is not None:
            if a["f"] is None or not close(a["f"], b["f"], TOL) or not close(a["p"], b["p"], 1e-8):
                fail(f"{source}: F {a['f']!r} p {a['p']!r}, R: F {b['f']!r} p {b['p']!r}")
        print(f"ok: {source:28} df {a['df']:3}  SS {a['ss']:.12g}  (R {term})")


# ---- CSV cases: the command line's role flags against R's model of the same columns ----------------------

CSV_CASES = {
    "oats": (["--csv", "oats.csv", "--design", "split", "--block", "B", "--main", "V", "--sub", "N", "--response", "Y"],
             'd <- read.csv("oats.csv", stringsAsFactors = TRUE)\n'
             's <- summary(aov(Y ~ V * N + Error(B/V), data = d))\n'
             'emit(s[["Error: B"]][[1]], function(t) "B:Residuals")\n'
             'emit(s[["Error: B:V"]][[1]], function(t) paste0("BV:", t))\n'
             'emit(s[["Error: Within"]][[1]], function(t) paste0("W:", t))\n',
             {"block": "B:Residuals", "V": "BV:V", "residual (whole plot)": "BV:Residuals", "N": "W:N",
              "V:N": "W:V:N", "residual (subplot)": "W:Residuals"}),
    "npk": (["--csv", "npk.csv", "--design", "rcbd", "--block", "block", "--treatment", "N,P,K", "--response", "yield"],
            'd <- read.csv("npk.csv", stringsAsFactors = TRUE); d$block <- factor(d$block)\n'
            'emit(anova(lm(yield ~ block + N * P * K, data = d)))\n',
            {"block": "block", "N": "N", "P": "P", "K": "K", "N:P": "N:P", "N:K": "N:K", "P:K": "P:K",
             "residual": "Residuals"}),
    "orchardsprays": (["--csv", "orchardsprays.csv", "--design", "latin", "--row", "rowpos", "--col", "colpos",
                       "--treatment", "treatment", "--response", "decrease"],
                      'd <- read.csv("orchardsprays.csv", stringsAsFactors = TRUE)\n'
                      'emit(anova(lm(decrease ~ factor(rowpos) + factor(colpos) + treatment, data = d)))\n',
                      {"row": "factor(rowpos)", "column": "factor(colpos)", "treatment": "treatment",
                       "residual": "Residuals"}),
    "strip": (["--csv", "strip_invented.csv", "--design", "strip", "--block", "block", "--main", "A", "--sub", "B",
               "--response", "y"],
              'd <- read.csv("strip_invented.csv", stringsAsFactors = TRUE)\n'
              's <- summary(aov(y ~ A * B + Error(block/(A * B)), data = d))\n'
              'emit(s[["Error: block:A"]][[1]], function(t) paste0("BA:", t))\n'
              'emit(s[["Error: block:B"]][[1]], function(t) paste0("BB:", t))\n'
              'emit(s[["Error: block:A:B"]][[1]], function(t) paste0("W:", t))\n',
              {"A": "BA:A", "residual (main strips)": "BA:Residuals", "B": "BB:B",
               "residual (sub strips)": "BB:Residuals", "A:B": "W:A:B", "residual (intersection)": "W:Residuals"}),
    "augmented": (["--csv", "augmented_invented.csv", "--design", "augmented", "--block", "block", "--treatment",
                   "entry", "--response", "y"],
                  'd <- read.csv("augmented_invented.csv", stringsAsFactors = TRUE)\n'
                  'd$group <- factor(grepl("^C", d$entry)); d$check <- factor(ifelse(grepl("^C", d$entry), '
                  'as.character(d$entry), "new"))\n'
                  'emit(anova(lm(y ~ block + group + check + entry, data = d)))\n',
                  {"block": "block", "checks vs new entries": "group", "checks": "check", "new entries": "entry",
                   "residual": "Residuals"}),
    "alpha": (["--csv", "alpha_invented.csv", "--design", "alpha", "--rep", "rep", "--block", "block", "--treatment",
               "entry", "--response", "y"],
              'd <- read.csv("alpha_invented.csv", stringsAsFactors = TRUE)\n'
              'emit(anova(lm(terms(y ~ rep + rep:block + entry, keep.order = TRUE), data = d)))\n',
              {"replicate": "rep", "block (within replicate)": "rep:block", "entry": "entry",
               "residual": "Residuals"}),
    "plantgrowth": (["--csv", "../r-classic/PlantGrowth/data.csv", "--design", "crd", "--treatment", "group",
                     "--response", "weight"],
                    'd <- read.csv("../r-classic/PlantGrowth/data.csv", stringsAsFactors = TRUE)\n'
                    'emit(anova(lm(weight ~ group, data = d)))\n',
                    {"treatment": "group", "residual": "Residuals"}),
    "sleep": (["--csv", "../r-classic/sleep/data.csv", "--design", "paired", "--block", "ID", "--treatment", "group",
               "--response", "extra"],
              'd <- read.csv("../r-classic/sleep/data.csv"); d$ID <- factor(d$ID); d$group <- factor(d$group)\n'
              'emit(anova(lm(extra ~ ID + group, data = d)))\n'
              't <- t.test(d$extra[d$group == "1"], d$extra[d$group == "2"], paired = TRUE)\n'
              'cat("paired", t$parameter, sprintf("%.17g", t$statistic), sprintf("%.17g", t$p.value), '
              'sprintf("%.17g", t$conf.int[1]), sep = "\\t"); cat("\\n")\n',
              {"block": "ID", "treatment": "group", "residual": "Residuals"}),
}


def csv_case(name, pw, datadir, work):
    args, script, mapping = CSV_CASES[name]
    out = run([pw, "analyze", *args, "--json"], stdin=None)
    result = json.loads(out.stdout)
    # R runs in the data folder so the file names in the script are those given to plotwright.
    rrows = r_rows(f'setwd("{datadir}")\n' + script, work)
    if name == "sleep":
        r = rrows.pop("paired")
        p = result["paired"]
        if p["df"] != r["df"] or not close(p["t"], r["ss"], TOL) or not close(p["p"], r["f"], 1e-8) \
                or not close(p["ci_lower"], r["p"], TOL):
            fail(f"paired t-test {p} differs from R's t.test {r}")
        print(f"ok: paired t-test t {p['t']:.12g} df {p['df']} p {p['p']:.6g} = R's t.test")
    if name == "npk" and [a["term"] for a in result["aliased"]] != ["N:P:K"]:
        fail(f"npk: N:P:K must be reported aliased, got {result['aliased']}")
    compare(result, rrows, mapping)


# ---- Database cases: a worked layout designed, recorded, analysed; R fits the same plots ------------------

def value_of(i, row, decimals):
    """Invented yields: a treatment effect, a block effect and a deterministic scatter."""
    t = sum(map(ord, row["treatment"])) % 17
    b = int(row["block"])
    noise = ((int(row["plot"]) * 7919) % 1000) / 1000.0
    v = 1.0 + 0.06 * t + 0.04 * (b % 5) + 0.5 * noise
    return round(v, min(decimals, 2))


def db_case(layout, pw, work):
    spec = tomllib.loads(layout.read_text())
    trial = spec["trial"]
    design = trial["design"]
    trait = spec["traits"][0]
    db = work / "trial.db"
    db.unlink(missing_ok=True)
    run([pw, "design", layout, "--db", db])
    rows = list(csv.DictReader(io.StringIO(run([pw, "plots", "--db", db, "--format", "csv"]).stdout)))
    checks = {t["label"] for t in spec.get("treatments", []) if t.get("check")}
    # One plot left unrecorded (a missing plot), except where the design's strata need complete data.
    skip = None
    if design not in ("split", "strip"):
        candidates = [i for i, r in enumerate(rows) if design != "augmented" or r["treatment"] in checks]
        skip = candidates[2]
    # And one recorded plot flagged `missing` (the default flags, docs/recording.md): its value must be left out.
    flagged = None
    if design not in ("split", "strip", "augmented") and "flags" not in spec:
        flagged = 5
    lines, values = [], {}
    for i, r in enumerate(rows):
        if i == skip:
            continue
        v = value_of(i, r, trait.get("decimals", 2))
        if i == flagged:
            lines += [r["tag"], f"{v}", "/flag missing washout from the ditch"]  # the flag closes the plot
            continue
        values[r["plot"]] = v
        lines += [r["tag"], f"{v}"] + (["/skip"] if len(spec["traits"]) > 1 else [])  # /skip: the plot's other traits
    run([pw, "record", "--db", db, "--observer", "analyze-check", "--device", "ctest"], stdin="\n".join(lines) + "\n")
    result = json.loads(run([pw, "analyze", "--db", db, "--trait", trait["name"], "--json"]).stdout)
    expected_missing = (skip is not None) + (flagged is not None)
    if len(result["missing"]) != expected_missing:
        fail(f"expected {expected_missing} missing plots, got {result['missing']}")
    if flagged is not None:
        m = [x for x in result["missing"] if x["plot"] == rows[flagged]["plot"]]
        if not m or "flagged missing" not in m[0]["reason"]:
            fail(f"plot {rows[flagged]['plot']} flagged missing: expected a missing plot naming the flag, got {m}")
        print(f"ok: plot {rows[flagged]['plot']} flagged missing is a missing plot: {m[0]['reason']}")

    # The same plots for R, with the design's columns and the factor levels of each treatment label.
    factors = spec.get("factors", [])
    table = work / "plots_r.csv"
    with table.open("w", newline="") as f:
        w = csv.writer(f)
        names = [fa["name"] for fa in factors]
        w.writerow(["plot", "block", "treatment", "rep", "iblock", "srow", "scol", "y", "ctrl"] +
                   [f"F{k}" for k in range(len(names))])
        for r in rows:
            levels = r["treatment"].split(" \u00d7 ") if factors else []
            ctrl = "control" if factors and len(levels) != len(factors) else "factorial"
            if ctrl == "control":
                levels = ["none"] * len(factors)
            w.writerow([r["plot"], r["block"], r["treatment"], r.get("rep", ""), r.get("incomplete_block", ""),
                        r.get("square_row", ""), r.get("square_col", ""), values.get(r["plot"], "NA"), ctrl] + levels)
    head = (f'd <- read.csv("{table}", stringsAsFactors = TRUE, colClasses = c(plot = "character"))\n'
            'd$block <- factor(d$block); d <- d[!is.na(d$y), ]\n')
    if design in ("split", "strip"):
        # The main factor: the one with role "main", else the first (docs/designs-more.md).
        main = next((k for k, fa in enumerate(factors) if fa.get("role") == "main"), 0)
        sub = 1 - main
        an, sn = factors[main]["name"], factors[sub]["name"]
        head += f'd$A <- d$F{main}; d$B <- d$F{sub}\n'
        if design == "split":
            script = head + ('s <- summary(aov(y ~ A * B + Error(block/A), data = d))\n'
                             'emit(s[["Error: block:A"]][[1]], function(t) paste0("BA:", t))\n'
                             'emit(s[["Error: Within"]][[1]], function(t) paste0("W:", t))\n')
            mapping = {an: "BA:A", "residual (whole plot)": "BA:Residuals", sn: "W:B", f"{an}:{sn}": "W:A:B",
                       "residual (subplot)": "W:Residuals"}
        else:
            script = head + ('s <- summary(aov(y ~ A * B + Error(block/(A * B)), data = d))\n'
                             'emit(s[["Error: block:A"]][[1]], function(t) paste0("BA:", t))\n'
                             'emit(s[["Error: block:B"]][[1]], function(t) paste0("BB:", t))\n'
                             'emit(s[["Error: block:A:B"]][[1]], function(t) paste0("W:", t))\n')
            mapping = {an: "BA:A", "residual (main strips)": "BA:Residuals", sn: "BB:B",
                       "residual (sub strips)": "BB:Residuals", f"{an}:{sn}": "W:A:B",
                       "residual (intersection)": "W:Residuals"}
    elif design == "augmented":
        script = head + (f'chk <- c({", ".join(json.dumps(c) for c in sorted(checks))})\n'
                         'd$group <- factor(d$treatment %in% chk)\n'
                         'd$check <- factor(ifelse(d$treatment %in% chk, as.character(d$treatment), "new"))\n'
                         'm <- lm(y ~ block + group + check + treatment, data = d); emit(anova(m)); emit_plots(m, d)\n')
        mapping = {"block": "block", "checks vs new entries": "group", "checks": "check",
                   "new entries": "treatment", "residual": "Residuals"}
    elif design == "alpha":
        script = head + ('d$rep <- factor(d$rep); d$iblock <- factor(d$iblock)\n'
                         'm <- lm(terms(y ~ rep + rep:iblock + treatment, keep.order = TRUE), data = d)\n'
                         'emit(anova(m)); emit_plots(m, d)\n')
        mapping = {"replicate": "rep", "block (within replicate)": "rep:iblock", "entry": "treatment",
                   "residual": "Residuals"}
    elif design == "latin":
        script = head + ('d$srow <- factor(d$srow); d$scol <- factor(d$scol)\n'
                         'm <- lm(y ~ srow + scol + treatment, data = d); emit(anova(m)); emit_plots(m, d)\n')
        mapping = {"row": "srow", "column": "scol", "treatment": "treatment", "residual": "Residuals"}
    else:  # crd, rcbd, paired; factorial treatments with an optional extra control
        blk = "" if design == "crd" else "block + "
        if factors:
            fs = " * ".join(f"F{k}" for k in range(len(factors)))
            ctrl = "ctrl + " if any(len(r["treatment"].split(" \u00d7 ")) != len(factors) for r in rows) else ""
            script = head + f'm <- lm(y ~ {blk}{ctrl}{fs}, data = d); emit(anova(m)); emit_plots(m, d)\n'
            mapping = {"residual": "Residuals"}
            if design != "crd":
                mapping["block"] = "block"
            if ctrl:
                mapping["control vs factorial"] = "ctrl"
            names = [fa["name"] for fa in factors]
            for k, n in enumerate(names):
                mapping[n] = f"F{k}"
            if len(names) == 2:
                mapping[f"{names[0]}:{names[1]}"] = "F0:F1"
        else:
            script = head + f'm <- lm(y ~ {blk}treatment, data = d); emit(anova(m)); emit_plots(m, d)\n'
            mapping = {"treatment": "treatment", "residual": "Residuals"}
            if design != "crd":
                mapping["block"] = "block"
    rplots = {}
    compare(result, r_rows(script, work, rplots), mapping)
    if design not in ("split", "strip"):  # single-stratum fits: R's hatvalues and rstandard apply
        compare_plots(result, rplots)
    print(f"ok: {layout.name}: {design} analysed from the database as R fits it")


def main():
    if shutil.which("Rscript") is None:
        print("SKIP: Rscript is not installed")
        sys.exit(SKIP)
    mode = sys.argv[1]
    if mode == "csv":
        name, pw, datadir, work = sys.argv[2], pathlib.Path(sys.argv[3]), pathlib.Path(sys.argv[4]), \
            pathlib.Path(sys.argv[5])
        work.mkdir(parents=True, exist_ok=True)
        import os
        os.chdir(datadir)
        csv_case(name, pw, datadir, work)
    else:
        layout, pw, work = pathlib.Path(sys.argv[2]), pathlib.Path(sys.argv[3]), pathlib.Path(sys.argv[4])
        work.mkdir(parents=True, exist_ok=True)
        db_case(layout, pw, work)


if __name__ == "__main__":
    main()
