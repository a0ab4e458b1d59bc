#!/usr/bin/python3
"""End-to-end run of one worked example in layouts/: design, plots, tags, record one plot, export.

Usage: layouts_checks.py SPEC PLOTWRIGHT WORKDIR

Runs the real executable as a user would and checks what it wrote with tools outside the project: Python's
tomllib (TOML v1.0.0) reads the spec, Python's csv module (an RFC 4180 reader) reads the plots and
observations, and the plot code's check character is computed here from ISO/IEC 7064 MOD 37,36, not by
the project's code. The columns each design adds to `plots` are those documented in docs/design.md.
"""
import csv
import io
import pathlib
import subprocess
import sys
import tomllib

from e2e_common import fail, run

# docs/design.md, "Columns of `plots`": the design's own columns, after the common ones.
DESIGN_COLUMNS = {
    "crd": [], "rcbd": [], "paired": [],
    "latin": ["square_row", "square_col"],
    "split": ["rep", "main", "sub"], "strip": ["rep", "main", "sub"],
    "augmented": ["incomplete_block"],
    "alpha": ["rep", "incomplete_block"],
}
COMMON = ["plot", "block", "row", "col", "treatment", "x_m", "y_m"]


def mod37_36_check(data):
    """ISO/IEC 7064 MOD 37,36 hybrid system, from the standard's recurrence (not from project code)."""
    alphabet = "0123456789ABCDEFGHIJKLMNOPQRSTUVWXYZ"
    m = 36
    p = m
    for ch in data:
        t = (p + alphabet.index(ch)) % m
        p = (2 * (t if t else m)) % (m + 1)
    return alphabet[(m + 1 - p) % m]


def main():
    spec_path, pw, work = pathlib.Path(sys.argv[1]), pathlib.Path(sys.argv[2]), pathlib.Path(sys.argv[3])
    work.mkdir(parents=True, exist_ok=True)
    spec = tomllib.loads(spec_path.read_text())
    design, code = spec["trial"]["design"], spec["trial"]["code"]
    db = work / "trial.db"
    db.unlink(missing_ok=True)

    run([pw, "design", spec_path, "--db", db])
    text = run([pw, "plots", "--db", db, "--format", "csv"]).stdout
    reader = csv.reader(io.StringIO(text))
    header = next(reader)
    rows = [dict(zip(header, r)) for r in reader]
    if header[: len(COMMON)] != COMMON:
        fail(f"plots header {header} does not start with {COMMON}")
    extra = DESIGN_COLUMNS[design]
    if extra and header[-len(extra):] != extra:
        fail(f"plots header {header} does not end with the {design} design's columns {extra}")
    for c in extra:
        if not all(r[c].isdigit() and int(r[c]) >= 1 for r in rows):
            fail(f"column {c} holds a value that is not a whole number of at least 1")
    ids = [r["plot"] for r in rows]
    if len(set(ids)) != len(ids) or not all(i.isdigit() and len(i) <= 6 for i in ids):
        fail(f"plot numbers are not unique numbers of at most 6 digits: {ids}")
    print(f"ok: {spec_path.name}: {design} design, {len(rows)} plots, columns {header}")

    tags = work / "tags"
    run([pw, "tags", "--db", db, "--out", tags, "--format", "svg"])
    svgs = list(tags.glob(f"{code}-*.svg"))
    if len(svgs) < len(rows):
        fail(f"{len(svgs)} SVG tags for {len(rows)} plots")
    print(f"ok: {len(svgs)} tags written")

    first = rows[0]["plot"]
    trait = spec["traits"][0]
    value = "1"  # every example's first trait is a number or count that accepts 1
    payload = f"PW1:{code}-{first}-{mod37_36_check(code + first)}"
    run([pw, "record", "--db", db, "--observer", "layouts-check", "--device", "ctest"],
        stdin=f"{payload}\n{value}\n/skip\n")
    obs = list(csv.DictReader(io.StringIO(run([pw, "export", "--db", db, "--format", "csv"]).stdout)))
    got = [o for o in obs if o["plot"] == first and o["trait"] == trait["name"]]
    if len(got) != 1 or float(got[0]["value"]) != 1.0:
        fail(f"export after recording plot {first}: {obs}")
    print(f"ok: plot {first} recorded ({trait['name']} = {got[0]['value']}) and exported")

    # One recorded plot cannot be analysed: the analysis refuses, naming a treatment with no observed plot.
    p = run([pw, "analyze", "--db", db, "--trait", trait["name"]], expect=1)
    if "has no observed plot" not in p.stderr or "treatment" not in p.stderr:
        fail(f"analyze of a {design} design with one plot recorded: expected a clear refusal, got:\n{p.stderr}")
    print(f"ok: analyze refuses one recorded plot clearly: {p.stderr.strip()}")

if __name__ == "__main__":
    main()
