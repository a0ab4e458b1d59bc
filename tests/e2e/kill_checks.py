#!/usr/bin/python3
"""Power cuts during recording: the recorder is killed with SIGKILL at random moments of a scripted
session, many times over one database. After every kill, each value the recorder had confirmed on its
output ("saved ...") must be in the database, and SQLite's own `PRAGMA integrity_check` (run by the
sqlite3 shell, an outside tool) must answer "ok".

Usage: kill_checks.py PLOTWRIGHT WORKDIR KILLS
The moments are drawn from Python's random module with a fixed seed, so a failure can be replayed.
"""
import csv
import io
import os
import pathlib
import random
import shutil
import signal
import subprocess
import sys
import time

from e2e_common import fail, output

ROOT = pathlib.Path(__file__).resolve().parents[2]
DEMO_SPEC = ROOT / "layouts" / "demo.toml"


def main():
    pw, work, kills = pathlib.Path(sys.argv[1]), pathlib.Path(sys.argv[2]), int(sys.argv[3])
    sqlite3 = shutil.which("sqlite3")
    if not sqlite3:
        fail("the sqlite3 shell (Debian package sqlite3) is needed")
    shutil.rmtree(work, ignore_errors=True)
    work.mkdir(parents=True)
    db = work / "trial.db"
    output([pw, "design", DEMO_SPEC, "--db", db])
    plots = list(csv.DictReader(io.StringIO(output([pw, "plots", "--db", db]))))
    rng = random.Random(20261202)
    confirmed = 0
    for k in range(kills):
        p = subprocess.Popen([str(pw), "record", "--db", str(db), "--device", f"hh-{k}", "--observer", "kill test"],
                             stdin=subprocess.PIPE, stdout=subprocess.PIPE, stderr=subprocess.DEVNULL, text=True,
                             bufsize=1)
        header = p.stdout.readline()
        if "plots have records" not in header:
            fail(f"unexpected first line {header!r}")
        saved = []
        for _ in range(rng.randint(0, 12)):  # values to confirm before the cut
            plot = plots[rng.randrange(len(plots))]
            value = f"{rng.uniform(0.5, 11.5):.2f}"  # grain_kg, within the demo spec's range
            p.stdin.write(f"{plot['tag']}\n{value}\n")
            p.stdin.flush()
            while True:  # plot card lines, then the confirmation
                line = p.stdout.readline()
                if not line:
                    fail(f"kill {k}: the recorder stopped early")
                if line.startswith("saved grain_kg"):
                    saved.append(value)
                    break
        # A last value on its way when the power goes: it may or may not have been saved.
        p.stdin.write(f"{plots[0]['tag']}\n1.00\n")
        p.stdin.flush()
        time.sleep(rng.uniform(0, 0.02))
        os.kill(p.pid, signal.SIGKILL)
        p.wait()
        # Every confirmed value is a row of the database.
        stored = output([sqlite3, db, f"SELECT value FROM observation WHERE device = 'hh-{k}' ORDER BY id"]).split()
        if stored[: len(saved)] != saved:
            fail(f"kill {k}: confirmed {saved}, the database holds {stored}")
        check = output([sqlite3, db, "PRAGMA integrity_check"]).strip()
        if check != "ok":
            fail(f"kill {k}: integrity_check says {check}")
        confirmed += len(saved)
    print(f"ok: {kills} kills; all {confirmed} confirmed values survived; integrity_check ok after each")


if __name__ == "__main__":
    main()
