#!/usr/bin/python3
"""The full-screen recorder in a real terminal: tmux (a general-purpose terminal multiplexer) runs
`plotwright record` at a given size, send-keys types and scans as a technician would, capture-pane reads
the screen, and the database is then read back through `plotwright export` and Python's csv module.

Usage: tui_checks.py PLOTWRIGHT WORKDIR WIDTH HEIGHT
"""
import csv
import io
import pathlib
import shutil
import subprocess
import sys
import time

ROOT = pathlib.Path(__file__).resolve().parents[2]
DEMO_SPEC = ROOT / "layouts" / "demo.toml"


def fail(msg):
    print("FAIL: " + msg)
    sys.exit(1)


def run(args, **kw):
    p = subprocess.run([str(a) for a in args], capture_output=True, text=True, **kw)
    if p.returncode != 0:
        fail(f"{' '.join(map(str, args))} exited {p.returncode}: {p.stderr}")
    return p.stdout


class Terminal:
    def __init__(self, socket, width, height, command):
        self.tmux = shutil.which("tmux")
        if not self.tmux:
            fail("tmux (Debian package tmux) is needed to drive the full-screen recorder")
        self.socket = socket
        self.t([ "-f", "/dev/null", "new-session", "-d", "-x", str(width), "-y", str(height),
                 "env", "TERM=xterm", *map(str, command)])

    def t(self, args):
        return run([self.tmux, "-L", self.socket, *args])

    def keys(self, *keys, literal=False):
        self.t(["send-keys", *(["-l"] if literal else []), *keys])
        time.sleep(0.15)

    def line(self, text):
        """What a keyboard-wedge scanner or a person sends: the text, then Enter."""
        if text:
            self.keys(text, literal=True)
        self.keys("Enter")

    def screen(self):
        return self.t(["capture-pane", "-p"])

    def wait_for(self, needle, seconds=5.0):
        end = time.time() + seconds
        while time.time() < end:
            s = self.screen()
            if needle in s:
                return s
            time.sleep(0.1)
        fail(f"the screen never showed {needle!r}; it shows:\n{self.screen()}")

    def close(self):
        subprocess.run([self.tmux, "-L", self.socket, "kill-server"], capture_output=True)


def main():
    pw, work, width, height = pathlib.Path(sys.argv[1]), pathlib.Path(sys.argv[2]), int(sys.argv[3]), int(sys.argv[4])
    shutil.rmtree(work, ignore_errors=True)
    work.mkdir(parents=True)
    db = work / "trial.db"
    run([pw, "design", DEMO_SPEC, "--db", db])
    plots = list(csv.DictReader(io.StringIO(run([pw, "plots", "--db", db]))))
    tags = [p["tag"] for p in plots]

    term = Terminal(f"pw-tui-{width}x{height}", width, height,
                    [pw, "record", "--db", db, "--device", "hh-tmux", "--observer", "tmux test"])
    try:
        screens = []
        s = term.wait_for("scan or type plot code")
        screens.append(s)
        lines = s.rstrip("\n").split("\n")
        if len(lines) > height or any(len(l) > width for l in lines):
            fail(f"the start screen does not fit {width}x{height}:\n{s}")
        if "SORG26" not in lines[0] or "F2skip" not in s:
            fail(f"the start screen lacks the trial or the key bar:\n{s}")

        # Plot 1: scan, answer the first trait with a refused value, then a good one, then correct it (F5).
        term.line(tags[0])
        screens.append(term.wait_for(f"plot {plots[0]['plot']}"))
        term.line("99")
        screens.append(term.wait_for("NO:"))
        term.line("5.25")
        screens.append(term.wait_for("saved grain_kg = 5.25"))
        term.keys("F5")
        screens.append(term.wait_for("correcting grain_kg"))
        term.line("5.52")
        screens.append(term.wait_for("saved grain_kg = 5.52"))
        term.keys("F2")  # skip the rest of plot 1
        screens.append(term.wait_for("skipped"))

        # Plot 2: flag it damaged with a reason (F3), record one value, skip.
        term.line(tags[1])
        term.wait_for(f"plot {plots[1]['plot']}")
        term.keys("F3")
        term.wait_for("reason?")
        term.line("hail")
        screens.append(term.wait_for("flagged damaged"))
        term.line("4.10")
        term.wait_for("saved grain_kg = 4.10")
        term.keys("F2")
        term.wait_for("skipped")
        term.keys("F10")
        time.sleep(0.5)
    finally:
        term.close()

    for s in screens:
        for l in s.rstrip("\n").split("\n"):
            if len(l) > width:
                fail(f"a line is wider than {width}: {l!r}")
    obs = list(csv.DictReader(io.StringIO(run([pw, "export", "--db", db, "--format", "csv"]))))
    got = {(o["plot"], o["trait"]): o["value"] for o in obs}
    want = {(plots[0]["plot"], "grain_kg"): "5.52", (plots[1]["plot"], "grain_kg"): "4.10"}
    if got != want:
        fail(f"the database holds {got}, expected {want}")
    sqlite3 = shutil.which("sqlite3")
    if not sqlite3:
        fail("the sqlite3 shell (Debian package sqlite3) is needed to read the history")
    history = run([sqlite3, db, "SELECT value FROM observation ORDER BY id"]).split()
    if history != ["5.25", "5.52", "4.10"]:
        fail(f"the history should keep the corrected value: {history}")
    events = run([sqlite3, db, "SELECT count(*) FROM plot_event"]).strip()
    if events != "1":
        fail(f"one flag expected, found {events}")
    print(f"ok: {width}x{height}: scan, refusal, value, correction, flag and skip on screen and in the database")


if __name__ == "__main__":
    main()
