#!/usr/bin/python3
"""The full-screen recorder in a real terminal: tmux (a general-purpose terminal multiplexer) runs
`plotwright record` at a given size, send-keys types and scans as a technician would, capture-pane reads
the screen, and the database is then read back through `plotwright export` and Python's csv module, and
through the sqlite3 shell (SQLite's own command-line tool) for the history and the flags.

The trial is the demo spec with a [[flags]] section of the test's own appended (docs/spec.md), so the
flags offered on screen come from the spec: undo (F4) and a spec-defined flag (F3, then its key) are
checked on screen and in the database.

Usage: tui_checks.py PLOTWRIGHT WORKDIR WIDTH HEIGHT
"""
import csv
import io
import pathlib
import shutil
import subprocess
import sys
import time

from e2e_common import fail, output

ROOT = pathlib.Path(__file__).resolve().parents[2]
DEMO_SPEC = ROOT / "layouts" / "demo.toml"
FLAGS = """
[[flags]]
name = "damaged"
analysis = "keep"

[[flags]]
name = "lodged"
label = "lodged"
analysis = "keep"

[[flags]]
name = "washed_out"
label = "washout"
analysis = "missing"
"""


class Terminal:
    def __init__(self, socket, width, height, command):
        self.tmux = shutil.which("tmux")
        if not self.tmux:
            fail("tmux (Debian package tmux) is needed to drive the full-screen recorder")
        self.socket = socket
        self.t([ "-f", "/dev/null", "new-session", "-d", "-x", str(width), "-y", str(height),
                 "env", "TERM=xterm", *map(str, command)])

    def t(self, args):
        return output([self.tmux, "-L", self.socket, *args])

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
            # A message may wrap on a narrow screen: compare with the lines joined by single spaces too.
            if needle in s or needle in " ".join(s.split()):
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
    spec = work / "demo-flags.toml"
    spec.write_text(DEMO_SPEC.read_text() + FLAGS)
    output([pw, "design", spec, "--db", db])
    plots = list(csv.DictReader(io.StringIO(output([pw, "plots", "--db", db]))))
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
        if "SORG26" not in lines[0] or "F2skip" not in s or "F4undo" not in s:
            fail(f"the start screen lacks the trial or the key bar:\n{s}")

        # Undo before anything was saved: said on screen, nothing written.
        term.keys("F4")
        screens.append(term.wait_for("nothing to undo"))

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
        # Undo the correction: back to 5.25, asked again with the restored value shown.
        term.keys("F4")
        s = term.wait_for("back to 5.25")
        screens.append(s)
        if f"undone: plot {plots[0]['plot']} grain_kg" not in " ".join(s.split()):
            fail(f"the undo message does not name the plot and trait:\n{s}")
        if "[was 5.25]" not in s:
            fail(f"after the undo the trait should be asked again showing the restored value:\n{s}")
        term.keys("F2")  # skip the rest of plot 1
        screens.append(term.wait_for("skipped"))

        # Plot 2: flag it lodged (F3, then the flag's key 2 from the spec), with a note; record one value
        # and undo it, so the plot keeps no value; skip.
        term.line(tags[1])
        term.wait_for(f"plot {plots[1]['plot']}")
        term.keys("F3")
        s = term.wait_for("2 lodged")
        screens.append(s)
        if "1 damaged" not in s or "3 washout" not in s:
            fail(f"the flag menu should list the spec's flags with their keys:\n{s}")
        term.keys("2", literal=True)
        screens.append(term.wait_for("note?"))
        term.line("stems flat")
        screens.append(term.wait_for("flagged lodged"))
        term.line("4.10")
        term.wait_for("saved grain_kg = 4.10")
        term.keys("F4")
        screens.append(term.wait_for("back to no value"))
        term.keys("F2")
        term.wait_for("skipped")

        # Plot 3: one value, then a flag that treats the plot as missing (key 3): the plot closes, and the
        # value is left out of the export.
        term.line(tags[2])
        term.wait_for(f"plot {plots[2]['plot']}")
        term.line("3.00")
        term.wait_for("saved grain_kg = 3.00")
        term.keys("F3")
        term.wait_for("3 washout")
        term.keys("3", literal=True)
        term.wait_for("note?")
        term.line("ditch")
        # On the 32x12 screen the closing message pushes the flag's own line out of view.
        screens.append(term.wait_for(f"plot {plots[2]['plot']} closed"))
        term.keys("F10")
        time.sleep(0.5)
    finally:
        term.close()

    for s in screens:
        for l in s.rstrip("\n").split("\n"):
            if len(l) > width:
                fail(f"a line is wider than {width}: {l!r}")
    obs = list(csv.DictReader(io.StringIO(output([pw, "export", "--db", db, "--format", "csv"]))))
    got = {(o["plot"], o["trait"]): o["value"] for o in obs}
    # Plot 1 back to 5.25 by the undo; plot 2's value undone; plot 3 flagged as missing.
    want = {(plots[0]["plot"], "grain_kg"): "5.25"}
    if got != want:
        fail(f"the export holds {got}, expected {want}")
    sqlite3 = shutil.which("sqlite3")
    if not sqlite3:
        fail("the sqlite3 shell (Debian package sqlite3) is needed to read the history")
    # Append-only: every value stays, the undo rows supersede the undone ones.
    history = output([sqlite3, db, "SELECT plot, quote(value), coalesce(supersedes, '-'), note FROM observation "
                                "ORDER BY id"]).strip().split("\n")
    p1, p2, p3 = plots[0]["plot"], plots[1]["plot"], plots[2]["plot"]
    want_history = [f"{p1}|'5.25'|-|", f"{p1}|'5.52'|1|corrected at entry", f"{p1}|'5.25'|2|undone: back to 5.25",
                    f"{p2}|'4.10'|-|", f"{p2}|''|4|undone: no value", f"{p3}|'3.00'|-|"]
    if history != want_history:
        fail(f"the history should keep every value with the undo rows superseding: {history}, expected {want_history}")
    current = output([sqlite3, db, "SELECT plot, value FROM current_observation ORDER BY id"]).split()
    if current != [f"{p1}|5.25", f"{p2}|", f"{p3}|3.00"]:
        fail(f"current rows: {current}")
    events = output([sqlite3, db, "SELECT plot, flag, state, reason FROM plot_event ORDER BY id"]).strip().split("\n")
    if events != [f"{p2}|lodged|damaged|stems flat", f"{p3}|washed_out|missing|ditch"]:
        fail(f"the flags in the database: {events}")
    print(f"ok: {width}x{height}: scan, refusal, value, correction, undo, spec flags and skip on screen and in "
          "the database")


if __name__ == "__main__":
    main()
