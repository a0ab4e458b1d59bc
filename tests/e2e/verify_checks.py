#!/usr/bin/python3
"""End-to-end checks of `plotwright verify` (docs/certificate.md), one case per ctest entry.

Usage: verify_checks.py CASE PLOTWRIGHT WORKDIR

Outside tools: coreutils sha256sum hashes the canonical text; the sqlite3 shell edits the database behind
plotwright's back; the canonical text is rebuilt here, independently of the project's code, from
`plotwright plots` (read with Python's csv module), `plotwright design --json` and the spec (tomllib), by the
rules written in docs/certificate.md.

Cases:
  untouched        a new trial verifies (exit 0, outcome "verified")
  sha256sum        `verify --canonical | sha256sum` is the stored digest, and the canonical text equals the
                   one rebuilt here byte for byte
  plots-edited     two treatments swapped with the sqlite3 shell: exit 1, both plots named
  digest-edited    the stored digest replaced with the sqlite3 shell: exit 1, outcome "digest-mismatch"
  algorithm        the stored algorithm id replaced with the sqlite3 shell: exit 1, both versions named
"""
import csv
import io
import json
import pathlib
import shutil
import subprocess
import sys
import tomllib

import e2e_common
from e2e_common import fail, tool


def run(args, **kw):
    return e2e_common.run(args, text=False, **kw)


ROOT = pathlib.Path(__file__).resolve().parents[2]
DEMO_SPEC = ROOT / "layouts" / "demo.toml"
SEED = 4242


def new_trial(exe, work):
    if work.exists():
        shutil.rmtree(work)
    work.mkdir(parents=True)
    db = work / "trial.db"
    summary = json.loads(run([exe, "design", DEMO_SPEC, "--db", db, "--seed", SEED, "--json"]).stdout)
    return db, summary


def sqlite(db, sql):
    run([tool("sqlite3", "sqlite3"), db, sql])


def verify_json(exe, db, expect):
    return json.loads(run([exe, "verify", "--db", db, "--json"], expect=expect).stdout)


def escaped(s):
    return s.replace("\\", "\\\\").replace("\t", "\\t").replace("\n", "\\n").replace("\r", "\\r")


def rebuilt_canonical(exe, db, summary):
    """docs/certificate.md, from the plots listing and the design summary."""
    spec = tomllib.loads(DEMO_SPEC.read_text())
    rows = list(csv.DictReader(io.StringIO(run([exe, "plots", "--db", db]).stdout.decode())))
    base = ["plot", "block", "row", "col", "treatment", "x_m", "y_m", "walk_order", "tag"]
    design_cols = [c for c in rows[0].keys() if c not in base]
    rows.sort(key=lambda r: int(r["walk_order"]))
    lines = ["plotwright-layout-certificate/1", "design\t" + escaped(spec["trial"]["design"].lower()),
             "seed\t" + str(int(summary["seed"])), "algorithm\t" + escaped(summary["algorithm"]),
             "\t".join(["columns", "plot", "block", "treatment", "row", "col", "x_mm", "y_mm"] + design_cols)]
    for r in rows:
        mm = lambda v: str(round(float(v) * 1000))  # the CSV carries millimetres (3 decimals)
        lines.append("\t".join([r["plot"], r["block"], escaped(r["treatment"]), r["row"], r["col"],
                                mm(r["x_m"]), mm(r["y_m"])] + [r[c] for c in design_cols]))
    return ("\n".join(lines) + "\n").encode("utf-8")


def case_untouched(exe, work):
    db, _ = new_trial(exe, work)
    p = run([exe, "verify", "--db", db])
    if b"the one randomization gave" not in p.stdout:
        fail(f"untouched trial: unexpected message {p.stdout!r}")
    j = verify_json(exe, db, 0)
    if j["outcome"] != "verified" or not j["ok"] or j["differences"]:
        fail(f"untouched trial: {j}")


def case_sha256sum(exe, work):
    db, summary = new_trial(exe, work)
    text = run([exe, "verify", "--db", db, "--canonical"]).stdout
    digest = run([tool("sha256sum", "coreutils")], stdin=text).stdout.decode().split()[0]
    j = verify_json(exe, db, 0)
    if digest != j["stored_digest"] or digest != j["digest_of_stored"]:
        fail(f"sha256sum of the canonical text {digest}, stored {j['stored_digest']}, computed {j['digest_of_stored']}")
    rebuilt = rebuilt_canonical(exe, db, summary)
    if rebuilt != text:
        fail("the canonical text differs from the one rebuilt from docs/certificate.md:\n"
             f"plotwright:\n{text.decode()}\nrebuilt:\n{rebuilt.decode()}")
    # FIPS 180-4 example, as a check of the outside tool itself.
    abc = run([tool("sha256sum", "coreutils")], stdin=b"abc").stdout.decode().split()[0]
    if abc != "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad":
        fail(f"sha256sum gives {abc} for 'abc'")


def case_plots_edited(exe, work):
    db, _ = new_trial(exe, work)
    # Plots 101 and 102 lie in block 1, which holds every treatment once: they differ.
    sqlite(db, "DROP TRIGGER plot_fixed_update;"
               "CREATE TEMP TABLE was AS SELECT id, treatment FROM plot WHERE id IN (101, 102);"
               "UPDATE plot SET treatment = (SELECT treatment FROM was WHERE was.id = 203 - plot.id)"
               " WHERE id IN (101, 102);")
    p = run([exe, "verify", "--db", db], expect=1)
    err = p.stderr.decode()
    if "edited" not in err or "plot 101:" not in err or "plot 102:" not in err:
        fail(f"edited plots not named: {err!r}")
    j = verify_json(exe, db, 1)
    if j["outcome"] != "plots-edited" or [d["plot"] for d in j["differences"]] != [101, 102]:
        fail(f"edited plots: {j}")


def case_digest_edited(exe, work):
    db, _ = new_trial(exe, work)
    sqlite(db, "DROP TRIGGER layout_certificate_fixed_update;"
               "UPDATE layout_certificate SET sha256 = '" + "0" * 64 + "';")
    j = verify_json(exe, db, 1)
    if j["outcome"] != "digest-mismatch" or j["differences"]:
        fail(f"replaced digest: {j}")


def case_algorithm(exe, work):
    db, summary = new_trial(exe, work)
    sqlite(db, "DROP TRIGGER trial_fixed_update;"
               "UPDATE trial SET algorithm = 'mt19937_64+lemire+fisher-yates/0;design=rcbd/0';")
    p = run([exe, "verify", "--db", db], expect=1)
    err = p.stderr.decode()
    if "mt19937_64+lemire+fisher-yates/0;design=rcbd/0" not in err or summary["algorithm"] not in err:
        fail(f"both algorithm versions should be named: {err!r}")
    if verify_json(exe, db, 1)["outcome"] != "algorithm-differs":
        fail("outcome is not algorithm-differs")


def main():
    if len(sys.argv) != 4:
        fail("usage: verify_checks.py CASE PLOTWRIGHT WORKDIR")
    case, exe, work = sys.argv[1], sys.argv[2], pathlib.Path(sys.argv[3])
    cases = {"untouched": case_untouched, "sha256sum": case_sha256sum, "plots-edited": case_plots_edited,
             "digest-edited": case_digest_edited, "algorithm": case_algorithm}
    cases[case](exe, work)
    print(f"verify {case}: ok")


if __name__ == "__main__":
    main()
