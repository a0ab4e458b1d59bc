#!/usr/bin/python3
"""End-to-end checks of the plotwright executable, one case per ctest entry.

Usage: cli_checks.py CASE PLOTWRIGHT WORKDIR

Each case runs the real executable the way a user or a script would and checks what it wrote with tools
from outside the project: the sqlite3 shell's .dump for "the database is unchanged", zbarimg (zbar-tools)
for decoding tags, Python's csv module (RFC 4180 reader) for CSV output, and an ISO/IEC 7064 MOD 37,36
check computed here, independently of the project's code, from the algorithm in the standard.
"""
import csv
import io
import json
import os
import pathlib
import shutil
import subprocess
import sys

from e2e_common import fail, run

ROOT = pathlib.Path(__file__).resolve().parents[2]
DEMO_SPEC = ROOT / "layouts" / "demo.toml"


def mod37_36_check(data):
    """ISO/IEC 7064 MOD 37,36 hybrid system, written from the standard's recurrence (not from project code):
    P starts at M=36; for each character P = (2 * (((P + v) mod M) or M)) mod (M+1); check = (M+1-P) mod M."""
    alphabet = "0123456789ABCDEFGHIJKLMNOPQRSTUVWXYZ"
    m = 36
    p = m
    for ch in data:
        t = (p + alphabet.index(ch)) % m
        if t == 0:
            t = m
        p = (2 * t) % (m + 1)
    return alphabet[(m + 1 - p) % m]


def db_dump(db):
    sqlite3 = shutil.which("sqlite3")
    if not sqlite3:
        fail("the sqlite3 shell (Debian package sqlite3) is needed to compare database contents")
    return run([sqlite3, db, ".dump"]).stdout


def spec_with_seed(work, seed):
    text = DEMO_SPEC.read_text()
    lines = [l for l in text.splitlines() if not l.strip().startswith("seed")]
    out = []
    for l in lines:
        out.append(l)
        if l.strip() == "[trial]":
            out.append(f"seed = {seed}")
    path = work / f"spec-{seed}.toml"
    path.write_text("\n".join(out) + "\n")
    return path


def plots_csv(pw, work, seed, name):
    db = work / f"{name}.db"
    run([pw, "design", spec_with_seed(work, seed), "--db", db])
    return run([pw, "plots", "--db", db, "--format", "csv"]).stdout


def case_reproducible(pw, work):
    a = plots_csv(pw, work, 4242, "a")
    b = plots_csv(pw, work, 4242, "b")
    c = plots_csv(pw, work, 4243, "c")
    if a != b:
        fail("the same spec and seed gave different plots output")
    if a == c:
        fail("another seed gave the same layout")
    rows = list(csv.DictReader(io.StringIO(a)))  # Python's csv module: an RFC 4180 reader
    for col in ["plot", "block", "row", "col", "treatment", "x_m", "y_m"]:
        if col not in rows[0]:
            fail(f"plots CSV lacks column {col}")
    blocks = {}
    for r in rows:
        blocks.setdefault(r["block"], []).append(r["treatment"])
    treatments = sorted(blocks["1"])
    for b, trts in blocks.items():
        if sorted(trts) != treatments or len(set(trts)) != len(trts):
            fail(f"block {b} does not hold each treatment exactly once: {trts}")
    print(f"ok: {len(rows)} plots, byte-identical for one seed, different for another, "
          f"each of {len(treatments)} treatments once in each of {len(blocks)} blocks")

    # A spec without a seed: a seed is drawn, stored and reported, and re-deriving with it gives the layout.
    unseeded = work / "unseeded.toml"
    unseeded.write_text("\n".join(l for l in DEMO_SPEC.read_text().splitlines()
                                  if not l.strip().startswith("seed")) + "\n")
    summary = json.loads(run([pw, "design", unseeded, "--db", work / "u1.db", "--json"]).stdout)
    drawn = summary["seed"]
    first = run([pw, "plots", "--db", work / "u1.db"]).stdout
    run([pw, "design", unseeded, "--db", work / "u2.db", "--seed", drawn])
    if run([pw, "plots", "--db", work / "u2.db"]).stdout != first:
        fail(f"re-deriving with the drawn seed {drawn} gave another layout")
    print(f"ok: a spec without a seed got seed {drawn}, and that seed re-derives its layout")


def first_plot_and_traits(pw, db):
    rows = list(csv.DictReader(io.StringIO(run([pw, "plots", "--db", db, "--format", "csv"]).stdout)))
    return rows


def case_recorder_refusals(pw, work):
    db = work / "trial.db"
    run([pw, "design", DEMO_SPEC, "--db", db])
    plots = first_plot_and_traits(pw, db)
    code = None
    for line in DEMO_SPEC.read_text().splitlines():
        if line.strip().startswith("code"):
            code = line.split("=", 1)[1].split("#")[0].strip().strip('"')
    first = plots[0]["plot"]
    good = f"PW1:{code}-{first}-{mod37_36_check(code + first)}"
    wrong_trial_code = "ZZ99"
    cases = {
        "a tag of another trial": (f"PW1:{wrong_trial_code}-{first}-{mod37_36_check(wrong_trial_code + first)}\n",
                                   "trial ZZ99"),
        "an unknown plot": (f"PW1:{code}-9999-{mod37_36_check(code + '9999')}\n", "no plot 9999"),
        "garbage text": ("%%% not a code\n", "plot code"),
        "a damaged check character": (good[:-1] + ("A" if good[-1] != "A" else "B") + "\n", "check character"),
        "an out-of-range value": (good + "\n999999\n", "maximum"),
    }
    before = db_dump(db)
    for name, (lines, needle) in cases.items():
        p = run([pw, "record", "--db", db, "--observer", "test"], stdin=lines, expect=1)
        if "refused" not in p.stderr or needle.lower() not in p.stderr.lower():
            fail(f"{name}: expected a refusal mentioning '{needle}', got stderr:\n{p.stderr}")
        if db_dump(db) != before:
            fail(f"{name}: the database changed although the input was refused")
        print(f"ok: {name} refused ({p.stderr.strip().splitlines()[0]}), database unchanged")
    # The good code opens the plot (its card is shown) and writes nothing until a value is confirmed.
    p = run([pw, "record", "--db", db, "--observer", "test", "--device", "hh-7"], stdin=good + "\n", expect=0)
    if f"plot {first}" not in p.stdout or db_dump(db) != before:
        fail(f"a good scan should show plot {first} and write nothing:\n{p.stdout}")
    print(f"ok: the good code {good} opens plot {first}")


def case_demo_tags_decode(pw, work):
    zbarimg = shutil.which("zbarimg")
    if not zbarimg:
        fail("zbarimg (Debian package zbar-tools) is needed to decode the tags")
    out = work / "demo"
    p = run([pw, "demo", "--out", out, "--spec", DEMO_SPEC])
    if "files written" not in p.stdout:
        fail("the demo did not list the files it wrote")
    db = out / "demo-trial.db"
    rows = first_plot_and_traits(pw, db)
    tags = out / "tags"
    pngs = sorted(tags.glob("*.png"))
    if len(pngs) != len(rows):
        fail(f"{len(pngs)} PNG tags for {len(rows)} plots")
    code = pngs[0].name.rsplit("-", 1)[0]
    for r in rows:
        plot = r["plot"]
        expected = f"PW1:{code}-{plot}-{mod37_36_check(code + plot)}"
        if "tag" in r and r["tag"] != expected:
            fail(f"plot {plot}: stored tag {r['tag']} differs from {expected}")
        png = tags / f"{code}-{plot}.png"
        d = run([zbarimg, "--nodbus", "-q", "--raw", png])
        if d.stdout.strip() != expected:
            fail(f"{png.name} decodes to {d.stdout.strip()!r}, expected {expected!r}")
    print(f"ok: {len(rows)} demo tags decode with zbarimg to their plots' payloads")
    obs = list(csv.DictReader(io.StringIO((out / "observations.csv").read_text())))
    want = ["plot", "block", "treatment", "trait", "value", "unit", "recorded_utc", "device", "observer"]
    if list(obs[0].keys())[: len(want)] != want:
        fail(f"observations.csv columns {list(obs[0].keys())}, expected {want} first")
    print(f"ok: observations.csv has {len(obs)} rows with the documented columns")


def case_help(pw, work):
    for cmd in ["design", "plots", "tags", "record", "export", "analyze", "demo"]:
        p = run([pw, cmd, "--help"])
        if "--help" not in p.stdout:
            fail(f"{cmd} --help printed no usage")
    p = run([pw, "design", "--no-such-option"], expect=2)
    if not p.stderr.strip() or p.stdout.strip():
        fail("a misused command line must explain itself on stderr only")
    p = run([pw, "plots", "--db", work / "absent.db"], expect=2)
    bad = work / "bad.toml"
    bad.write_text('[trial]\ncode = "x"\n')
    p = run([pw, "design", bad, "--db", work / "bad.db"], expect=1)
    if "bad.toml" not in p.stderr:
        fail(f"a spec error must name the file: {p.stderr}")
    if (work / "bad.db").exists():
        fail("a refused spec must not leave a database behind")
    print("ok: every command has --help; misuse exits 2, a bad spec exits 1 naming its file")


def main():
    case, pw, work = sys.argv[1], pathlib.Path(sys.argv[2]), pathlib.Path(sys.argv[3])
    shutil.rmtree(work, ignore_errors=True)
    work.mkdir(parents=True)
    {"reproducible": case_reproducible, "refusals": case_recorder_refusals,
     "demo-tags": case_demo_tags_decode, "help": case_help}[case](pw, work)


if __name__ == "__main__":
    main()
