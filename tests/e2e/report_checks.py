#!/usr/bin/python3
"""End-to-end checks of `plotwright report` (docs/report.md) on the demo's invented trial.

Usage: report_checks.py CHECK PLOTWRIGHT WORKDIR

CHECK is one of
  page      the report is well-formed HTML (Python's html.parser, every element closed in order), every inline
            SVG parses as XML (xml.etree), it has no script and no external reference, and every plot of the
            layout (plots.csv) is in each trait's field map
  json      every ANOVA row, grand mean, CV, SED and LSD in the page equals `plotwright analyze --json` for the
            same trait. Both are plotwright's: a CONSISTENCY check (one analysis, two printouts), not validation
  r         the same ANOVA rows, and every plot's residual and standardized residual, equal R 4.2.2's aov,
            residuals and rstandard run live on the exported observations.csv (the outside reference; exit 77
            when Rscript is missing);
            for a yield of the spec, R computes the yield itself from the exported weight and moisture
  blind     `report --blind` shows no treatment label of the spec, and T1..Tn instead
  colours   the colour classes drawn in the legends are ColorBrewer's YlGnBu (9) and RdBu (11) as R's
            RColorBrewer::brewer.pal gives them (exit 77 when R or RColorBrewer is missing)
  chromium  Debian's chromium renders the page headless at 1280 px and 390 px wide without console errors,
            to PNG files of reasonable size, and its DOM holds the ANOVA tables (exit 77 without chromium)
"""
import csv
import html
import html.parser
import json
import math
import os
import pathlib
import re
import shutil
import subprocess
import sys
import xml.etree.ElementTree as ET

from e2e_common import fail, run

SKIP = 77
TOL = 1e-9
VOID = {"area", "base", "br", "col", "embed", "hr", "img", "input", "link", "meta", "source", "track", "wbr"}


def demo(pw, work):
    out = work / "demo"
    run([pw, "demo", "--out", out])
    page = out / "report.html"
    if not page.is_file():
        fail("the demo wrote no report.html")
    return out, page.read_text(encoding="utf-8")


class Page(html.parser.HTMLParser):
    """Checks nesting and collects the tables, sections and SVG fills the checks read."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.stack, self.errors = [], []
        self.trait = None
        self.anova = {}      # trait -> {source: [cell data-values]}
        self.summary = {}    # trait -> {key: [values]}
        self.plots = {}      # trait -> {plot: [cell data-values]}
        self.map_plots = {}  # trait -> set of data-plot in svg.map
        self.legend_fills = []  # one list of fills per legend
        self._table = None
        self._row = None
        self._in_map = False
        self._legend = None

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        if tag not in VOID:
            self.stack.append((tag, self.getpos()))
        cls = (a.get("class") or "").split()
        if tag == "section" and "trait" in cls:
            self.trait = a.get("data-trait")
        if tag == "table":
            self._table = ("anova" if "anova" in cls else "plots" if "plots" in cls else None, a.get("data-trait"))
        if tag == "tr" and self._table and self._table[0]:
            key = a.get("data-source") if self._table[0] == "anova" else a.get("data-plot")
            target = self.anova if self._table[0] == "anova" else self.plots
            if key is not None:  # the header row has none
                self._row = []
                target.setdefault(self._table[1], {})[key] = self._row
        if tag == "td" and self._row is not None:
            v = a.get("data-value")
            self._row.append(None if v is None else float(v))
        if tag == "dd" and a.get("data-key") and self.trait:
            self.summary.setdefault(self.trait, {}).setdefault(a["data-key"], []).append(float(a["data-value"]))
        if tag == "svg" and "map" in cls:
            self._in_map = True
            self.map_plots.setdefault(self.trait, []).append(set())
        if tag == "g" and self._in_map and "data-plot" in a:
            self.map_plots[self.trait][-1].add(a["data-plot"])
        if tag == "svg" and "legend" in cls:
            self._legend = []
            self.legend_fills.append(self._legend)
        if tag == "rect" and self._legend is not None and a.get("fill", "").startswith("#") and a.get("height") == "16" \
                and a.get("width") != "22":
            self._legend.append(a["fill"].upper())

    def handle_startendtag(self, tag, attrs):
        # Self-closing SVG elements (<rect/>) and void HTML elements open nothing.
        stack = list(self.stack)
        self.handle_starttag(tag, attrs)
        self.stack = stack

    def handle_endtag(self, tag):
        if tag in VOID:
            return
        if not self.stack or self.stack[-1][0] != tag:
            self.errors.append(f"</{tag}> at line {self.getpos()[0]} closes {self.stack[-1] if self.stack else 'nothing'}")
            return
        self.stack.pop()
        if tag == "table":
            self._table, self._row = None, None
        if tag == "tr":
            self._row = None
        if tag == "svg":
            self._in_map = False
            self._legend = None
        if tag == "section":
            self.trait = None


def parse(text):
    p = Page()
    p.feed(text)
    p.close()
    if p.errors:
        fail("not well-formed: " + "; ".join(p.errors[:5]))
    if p.stack:
        fail(f"elements left open: {p.stack[:5]}")
    return p


def check_page(pw, work):
    out, text = demo(pw, work)
    page = parse(text)
    print(f"ok: html.parser: every element closed in order ({len(text)} characters)")
    svgs = re.findall(r"<svg\b.*?</svg>", text, flags=re.S)
    if len(svgs) < 4:
        fail(f"expected maps and charts, found {len(svgs)} SVG elements")
    for s in svgs:
        try:
            ET.fromstring(s)
        except ET.ParseError as e:
            fail(f"an SVG is not well-formed XML ({e}): {s[:200]}")
    print(f"ok: xml.etree parses all {len(svgs)} inline SVGs")
    if re.search(r"<script", text, flags=re.I):
        fail("the report has a <script>")
    external = re.findall(r"""(?:src|href|xlink:href)\s*=\s*["']?\s*(?:https?:|//|file:)""", text, flags=re.I)
    external += re.findall(r"url\(\s*['\"]?\s*(?:https?:|//)", text, flags=re.I)
    external += re.findall(r"@import", text, flags=re.I)
    if external:
        fail(f"external references: {external[:5]}")
    if re.search(r"""\ssrc\s*=""", text, flags=re.I):
        fail("the report loads something (src=)")
    for href in re.findall(r"""href\s*=\s*"([^"]*)\"""", text):
        if not href.startswith("#"):
            fail(f"a link leaves the page: {href}")
    print("ok: no script, no src=, every href an anchor in the page")
    plots = {r["plot"] for r in csv.DictReader((out / "plots.csv").open())}
    if not page.map_plots:
        fail("no field map found")
    for trait, maps in page.map_plots.items():
        for m in maps:
            if m != plots:
                fail(f"{trait}: map plots differ from plots.csv: missing {sorted(plots - m)}, extra {sorted(m - plots)}")
    print(f"ok: every one of the {len(plots)} plots of plots.csv is in each of "
          f"{sum(len(m) for m in page.map_plots.values())} maps")


def demo_spec():
    import tomllib
    return tomllib.loads((pathlib.Path(__file__).resolve().parents[2] / "layouts" / "demo.toml").read_text())


def numeric_traits(out):
    spec = demo_spec()
    return [t["name"] for t in spec["traits"] if t["kind"] in ("number", "count", "score")] + \
        [y["name"] for y in spec.get("yields", [])]


def check_json(pw, work):
    out, text = demo(pw, work)
    page = parse(text)
    traits = numeric_traits(out)
    for trait in traits:
        j = json.loads(run([pw, "analyze", "--db", out / "demo-trial.db", "--trait", trait, "--json"]).stdout)
        rows = page.anova.get(trait)
        if rows is None:
            fail(f"{trait}: no ANOVA table in the report")
        if list(rows) != [r["source"] for r in j["anova"]]:
            fail(f"{trait}: rows {list(rows)} differ from analyze's {[r['source'] for r in j['anova']]}")
        for r in j["anova"]:
            _, df, ss, ms, f, p = rows[r["source"]]
            want = [r["df"], r["ss"], None if r["source"] == "total" else r["ms"], r["f"], r["p"]]
            if [df, ss, ms, f, p] != want:
                fail(f"{trait} {r['source']}: page {[df, ss, ms, f, p]} != analyze --json {want}")
        s = page.summary[trait]
        checks = {"grand_mean": [j["grand_mean"]], "cv": [c["cv_percent"] for c in j["cv"]],
                  "sed": [j["sed"]] if j["sed"] is not None else None,
                  "lsd_5pct": [j["lsd_5pct"]] if j["lsd_5pct"] is not None else None}
        for key, want in checks.items():
            if s.get(key) != want:
                fail(f"{trait} {key}: page {s.get(key)} != analyze --json {want}")
        print(f"ok: {trait}: {len(rows)} ANOVA rows, grand mean, CV, SED, LSD identical to analyze --json "
              f"(consistency of two printouts of one analysis)")


R_SCRIPT = r'''
d <- read.csv("%s", stringsAsFactors = FALSE, colClasses = c(plot = "character"))
%s
d$value <- as.numeric(d$value); d$block <- factor(d$block); d$treatment <- factor(d$treatment)
fit <- aov(value ~ block + treatment, data = d)
tab <- summary(fit)[[1]]
for (i in seq_len(nrow(tab)))
  cat("row", trimws(rownames(tab)[i]), tab$Df[i], sprintf("%%.17g", tab$`Sum Sq`[i]), sprintf("%%.17g", tab$`Mean Sq`[i]),
      sprintf("%%.17g", tab$`F value`[i]), sprintf("%%.17g", tab$`Pr(>F)`[i]), "\n", sep = "\t")
e <- residuals(fit); z <- rstandard(fit)  # rstandard: e / (s * sqrt(1 - hatvalues)), NaN where h = 1
for (i in seq_len(nrow(d)))
  cat("plot", d$plot[i], sprintf("%%.17g", e[rownames(d)[i]]), sprintf("%%.17g", z[rownames(d)[i]]), "\n", sep = "\t")
'''


def close(a, b, tol, scale=None):
    if a is None or b is None:
        return a is None and b is None
    return abs(a - b) <= tol * (abs(b) if scale is None else scale) or abs(a - b) <= 1e-300


def check_r(pw, work):
    if shutil.which("Rscript") is None:
        print("SKIP: Rscript is not installed")
        sys.exit(SKIP)
    out, text = demo(pw, work)
    page = parse(text)
    obs = out / "observations.csv"
    spec = demo_spec()
    yields = {y["name"]: y for y in spec.get("yields", [])}
    for trait in numeric_traits(out):
        script = work / f"aov_{trait}.R"
        select = f'd <- d[d$trait == "{trait}", ]'
        if trait in yields:
            # A yield is computed, never recorded: R recomputes it from the exported weight and moisture with
            # the formula of the agronomic reference set, weight x (100 - M) / (100 - Mstd) / net area x 10
            # (t/ha; dry-matter conservation, from memory; Mulvaney & Devkota 2020, UF/IFAS EDIS SS-AGR-443),
            # with sorghum's 14 % basis (common practice) and the demo field's 6 m x 1.5 m harvest area.
            y = yields[trait]
            assert y.get("unit", "t/ha") == "t/ha" and spec["trial"]["crop"] == "sorghum"
            area = spec["field"]["harvest_length_m"] * spec["field"]["harvest_width_m"]
            select = (f'w <- d[d$trait == "{y["weight"]}", ]; m <- d[d$trait == "{y["moisture"]}", c("plot", "value")]\n'
                      f'names(m)[2] <- "moisture"; d <- merge(w, m, by = "plot")\n'
                      f'd$value <- as.numeric(d$value) * (100 - as.numeric(d$moisture)) / (100 - 14) / {area!r} * 10\n'
                      f'd <- d[order(d$plot), ]')
        script.write_text(R_SCRIPT % (obs, select))
        lines = [l.split("\t") for l in run(["Rscript", "--vanilla", script]).stdout.splitlines()]
        names = {"block": "block", "treatment": "treatment", "Residuals": "residual"}
        rows = page.anova[trait]
        for l in lines:
            if l[0] != "row":
                continue
            src = names[l[1]]
            _, df, ss, ms, f, p = rows[src]
            val = lambda s: None if s in ("NA", "NaN") else float(s)
            rdf, rss, rms, rf, rp = int(l[2]), float(l[3]), float(l[4]), val(l[5]), val(l[6])
            if df != rdf or not close(ss, rss, TOL) or not close(ms, rms, TOL) or not close(f, rf, TOL) \
                    or not close(p, rp, 1e-8):
                fail(f"{trait} {src}: page df {df} SS {ss!r} MS {ms!r} F {f!r} p {p!r}; R aov: {l[2:7]}")
            print(f"ok: {trait:13} {src:10} df {df:3} SS {ss:.12g} = R's aov")
        resid_scale = math.sqrt(rows["residual"][3])
        n = 0
        for l in lines:
            if l[0] != "plot":
                continue
            cells = page.plots[trait][l[1]]
            residual, z = cells[5], cells[6]
            val = lambda s: None if s in ("NA", "NaN") else float(s)  # NA: left out by aov; NaN: leverage 1
            if not close(residual, val(l[2]), TOL, resid_scale) or not close(z, val(l[3]), TOL, 1.0):
                fail(f"{trait} plot {l[1]}: residual {residual!r} z {z!r}; R: {l[2]} {l[3]}")
            n += 1
        print(f"ok: {trait}: residuals and standardized residuals of {n} plots = R's residuals(aov), rstandard(aov)")


def check_blind(pw, work):
    out, _ = demo(pw, work)
    page_file = work / "blind.html"
    run([pw, "report", "--db", out / "demo-trial.db", "--blind", "--out", page_file])
    text = page_file.read_text(encoding="utf-8")
    parse(text)
    import tomllib
    spec = tomllib.loads((pathlib.Path(__file__).resolve().parents[2] / "layouts" / "demo.toml").read_text())
    shown = html.unescape(re.sub(r"<[^>]*>", " ", text))
    attrs = html.unescape(text)
    for t in spec["treatments"]:
        if t["label"] in shown or t["label"] in attrs:
            fail(f"the blind report shows treatment {t['label']!r}")
    for k in range(1, len(spec["treatments"]) + 1):
        if f">T{k}<" not in text:
            fail(f"the blind report does not show T{k}")
    print(f"ok: --blind: none of the {len(spec['treatments'])} treatment labels, codes T1..T{len(spec['treatments'])} instead")


def check_colours(pw, work):
    if shutil.which("Rscript") is None:
        print("SKIP: Rscript is not installed")
        sys.exit(SKIP)
    p = run(["Rscript", "--vanilla", "-e",
             'if (!requireNamespace("RColorBrewer", quietly = TRUE)) quit(status = 77); '
             'cat(RColorBrewer::brewer.pal(9, "YlGnBu"), "\\n"); cat(RColorBrewer::brewer.pal(11, "RdBu"), "\\n")'],
            expect=None)
    if p.returncode == SKIP:
        print("SKIP: R package RColorBrewer is not installed (Debian: r-cran-rcolorbrewer)")
        sys.exit(SKIP)
    if p.returncode != 0:
        fail(f"Rscript failed: {p.stderr}")
    seq, div = [l.split() for l in p.stdout.strip().splitlines()]
    _, text = demo(pw, work)
    page = parse(text)
    legends = page.legend_fills
    if not legends:
        fail("no legend in the report")
    for fills in legends:
        if fills != seq and fills != div:
            fail(f"legend colours {fills} are neither YlGnBu {seq} nor RdBu {div}")
    if seq not in legends or div not in legends:
        fail("the report should draw both scales")
    print(f"ok: {len(legends)} legends, each ColorBrewer YlGnBu (9) or RdBu (11) as RColorBrewer::brewer.pal gives them")


def check_chromium(pw, work):
    browser = shutil.which("chromium")
    if browser is None:
        print("SKIP: chromium is not installed (Debian: apt-get install chromium)")
        sys.exit(SKIP)
    out, _ = demo(pw, work)
    url = (out / "report.html").resolve().as_uri()
    env = dict(os.environ, HOME=str(work))
    base = [browser, "--headless", "--no-sandbox", "--disable-gpu", "--hide-scrollbars", "--no-first-run",
            f"--user-data-dir={work / 'profile'}", "--enable-logging=stderr", "--v=0"]
    for name, size in (("desktop", "1280,2000"), ("phone", "390,2000")):
        png = work / f"{name}.png"
        png.unlink(missing_ok=True)
        p = run(base + [f"--screenshot={png}", f"--window-size={size}", url], env=env)
        console = [l for l in p.stderr.splitlines() if "CONSOLE" in l or "Uncaught" in l]
        if console:
            fail(f"{name}: console messages: {console[:5]}")
        if not png.is_file():
            fail(f"{name}: no screenshot written")
        data = png.read_bytes()
        if data[:8] != b"\x89PNG\r\n\x1a\n":
            fail(f"{name}: not a PNG")
        width, height = int.from_bytes(data[16:20], "big"), int.from_bytes(data[20:24], "big")
        if len(data) < 20000:
            fail(f"{name}: {len(data)} bytes: an empty page?")
        print(f"ok: chromium {name}: {width} x {height} PNG, {len(data)} bytes, no console message")
    dom = run(base + ["--dump-dom", url], env=env).stdout
    if dom.count('class="anova"') < 1 or "<svg" not in dom:
        fail("chromium's DOM has no ANOVA table or no SVG")
    tables, svgs = dom.count('class="anova"'), dom.count("<svg")
    print(f"ok: chromium's DOM has {tables} ANOVA tables and {svgs} SVGs")


def main():
    check, pw, work = sys.argv[1], pathlib.Path(sys.argv[2]), pathlib.Path(sys.argv[3])
    work.mkdir(parents=True, exist_ok=True)
    {"page": check_page, "json": check_json, "r": check_r, "blind": check_blind, "colours": check_colours,
     "chromium": check_chromium}[check](pw, work)


if __name__ == "__main__":
    main()
