#!/usr/bin/python3
"""End-to-end checks of station sync (docs/station.md, docs/sync.md), one case per ctest entry.

Usage: sync_checks.py CASE PLOTWRIGHT WORKDIR

Outside tools: the sqlite3 shell (Debian package sqlite3) reads the databases behind plotwright's back
(`.dump` of the logical tables, PRAGMA integrity_check) and edits the audit log; coreutils sha256sum proves a
refused bundle left the station file byte for byte as it was; Python's csv module (RFC 4180) and json module
(RFC 8259) read the exports; hashlib (FIPS 180-4) and struct check a bundle against the byte layout written in
docs/sync.md.

Cases:
  orders    three handhelds record overlapping plots (the same plot on two of them with different values and
            with equal values, a correction in a later bundle); their bundles are imported into four copies of
            the station in four orders, one of them twice over: every copy ends with the same observations
            (by origin), the same conflicts and an intact audit log; integrity_check ok after every import
  faults    a truncated bundle, one flipped byte, a bundle of another trial, a bundle of a device the station
            never provisioned: each refused (exit 1) with its own message naming the file, the station's
            sha256sum unchanged
  format    a bundle read with struct + hashlib by the layout of docs/sync.md
  exports   csv, csv-long, csv-wide and json read by the csv and json modules; units in the wide header;
            the unresolved conflict left out and counted (stderr note, JSON field), in the exports and in
            `analyze`; after `resolve` it is in
  audit     `audit` passes, then an entry edited with the sqlite3 shell makes it fail at that entry (exit 1)
  blind     a blind trial's handheld file holds no treatment label; it records and exports with codes
  traits    the station adds two traits (`trait add`): the spec text kept as the file gave it, each definition
            read back by Python's tomllib equal to the file's table; refused adds (a name the trial has, a bad
            kind, on a handheld) name file:line and key, exit 1, the file's sha256sum unchanged; the station's
            bundle brings them to a handheld (twice: sha256sum unchanged; an older bundle after it: nothing
            more), whose trait table then equals the station's (sqlite3 shell), whose line recorder asks for them
            and whose bundle brings the values back; a blind handheld receives no comment of the trait file
  geojson   GeoJSON of a station with a conflict: the value left out, counted in the document's foreign
            members; GDAL's ogrinfo (RFC 7946 reader) sees the plot without it and the agreed value kept
"""
import csv
import hashlib
import io
import json
import pathlib
import re
import shutil
import struct
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
TRAITS = 7  # traits of the demo spec, in order: grain_kg, moisture_pct, height_cm, stand, lodging, flowering, note


def sqlite(db, sql):
    return run([tool("sqlite3", "sqlite3"), db, sql]).stdout.decode()


def sha256sum(path):
    return run([tool("sha256sum", "coreutils"), path]).stdout.decode().split()[0]


def integrity_ok(db):
    out = sqlite(db, "PRAGMA integrity_check;").strip()
    if out != "ok":
        fail(f"{db}: PRAGMA integrity_check says {out!r}")


class Trial:
    """A station database of the demo spec with its tags (from `plotwright plots`, read with csv)."""

    def __init__(self, exe, work, spec=DEMO_SPEC, seed=SEED, name="station.db"):
        self.exe = exe
        self.work = work
        self.db = work / name
        run([exe, "design", spec, "--db", self.db, "--seed", seed])
        plots = run([exe, "plots", "--db", self.db, "--format", "csv"]).stdout.decode()
        self.tags = {int(r["plot"]): r["tag"] for r in csv.DictReader(io.StringIO(plots))}

    def device(self, name, db=None):
        path = self.work / (db or f"{name}.db")
        run([self.exe, "device", "add", "--db", self.db, "--name", name, "--out", path])
        return path

    def record(self, device_db, observer, plots):
        """plots: list of (plot, [values of the first traits]) ; the rest of the traits left empty."""
        lines = []
        for plot, values in plots:
            lines.append(self.tags[plot])
            lines += values + [""] * (TRAITS - len(values))
        run([self.exe, "record", "--db", device_db, "--observer", observer, "--lines"],
            stdin=("\n".join(lines) + "\n").encode())

    def export(self, device_db, out):
        run([self.exe, "sync", "export", "--db", device_db, "--out", out])
        return out


def logical_dump(db):
    """The logical content, through the sqlite3 shell: observations by origin (station ids depend on arrival
    order, origins do not), what each supersedes by origin, the plot events by origin, the conflicts."""
    canon = (
        "SELECT coalesce(x.origin,'station'), coalesce(x.origin_id,o.id), o.plot, o.trait, o.value, "
        "quote(o.number), o.recorded_utc, o.device, o.observer, coalesce(sx.origin||'#'||sx.origin_id, o.supersedes, '-'), o.note "
        "FROM observation o LEFT JOIN observation_origin x ON x.observation=o.id "
        "LEFT JOIN observation_origin sx ON sx.observation=o.supersedes ORDER BY 1,2;"
        "SELECT '--events';"
        "SELECT coalesce(x.origin,'station'), coalesce(x.origin_id,e.id), e.plot, e.state, e.flag, e.reason "
        "FROM plot_event e LEFT JOIN plot_event_origin x ON x.event=e.id ORDER BY 1,2;"
        "SELECT '--received';"
        "SELECT * FROM sync_observation ORDER BY origin, origin_id;"
        "SELECT '--conflicts';"
        "SELECT * FROM observation_conflict ORDER BY plot, trait;")
    return sqlite(db, canon)


def make_three_devices(exe, work):
    t = Trial(exe, work)
    devices = {n: t.device(n) for n in ("hh-1", "hh-2", "hh-3")}
    # hh-1 and hh-2 both record plot 101 (grain differs, moisture equal) and 102 (all equal); hh-3 records
    # 103 and 104, and 104 again later with another value (a re-visit in a second bundle: a correction).
    t.record(devices["hh-1"], "A. Mwangi", [(101, ["4.77", "20.7"]), (102, ["5.10", "19.0"])])
    t.record(devices["hh-2"], "B. Osei", [(101, ["4.87", "20.7"]), (102, ["5.10", "19.0"]), (201, ["6.00"])])
    t.record(devices["hh-3"], "C. Ruiz", [(103, ["3.33"]), (104, ["4.44"])])
    bundles = [t.export(devices["hh-1"], work / "hh-1.1.bundle"),
               t.export(devices["hh-2"], work / "hh-2.1.bundle"),
               t.export(devices["hh-3"], work / "hh-3.1.bundle")]
    t.record(devices["hh-3"], "C. Ruiz", [(104, ["4.54"])])          # supersedes 4.44 on hh-3
    t.record(devices["hh-1"], "A. Mwangi", [(202, ["7.00"])])
    bundles += [t.export(devices["hh-3"], work / "hh-3.2.bundle"),
                t.export(devices["hh-1"], work / "hh-1.2.bundle")]
    return t, devices, bundles


def case_orders(exe, work):
    t, _, b = make_three_devices(exe, work)
    orders = {
        "forward": [b[0], b[1], b[2], b[3], b[4]],
        "backward": [b[4], b[3], b[2], b[1], b[0]],
        "mixed": [b[3], b[0], b[4], b[2], b[1]],
        "twice": [b[1], b[3], b[0], b[1], b[2], b[4], b[3], b[0]],
    }
    dumps = {}
    conflicts = {}
    for name, order in orders.items():
        db = work / f"station-{name}.db"
        shutil.copy(t.db, db)
        for bundle in order:
            run([exe, "sync", "import", "--db", db, bundle])
            integrity_ok(db)
        # Once more, all at once: nothing changes the second time.
        before = sha256sum(db)
        run([exe, "sync", "import", "--db", db] + order)
        if sha256sum(db) != before:
            fail(f"{name}: importing the same bundles again changed the station file")
        dumps[name] = logical_dump(db)
        c = json.loads(run([exe, "conflicts", "--db", db, "--json"]).stdout)
        for conflict in c["conflicts"]:
            for v in conflict["values"]:
                del v["observation"]  # station ids depend on the arrival order; origins do not
        conflicts[name] = c
        audit = json.loads(run([exe, "audit", "--db", db, "--json"]).stdout)
        if not audit["ok"]:
            fail(f"{name}: audit log broken: {audit['message']}")
    first = dumps["forward"]
    for name, d in dumps.items():
        if d != first:
            fail(f"order {name} gives another station than forward:\n{d}\n---\n{first}")
        if conflicts[name] != conflicts["forward"]:
            fail(f"order {name} gives other conflicts")
    c = conflicts["forward"]
    # Plot 101's grain differs between hh-1 and hh-2: the one conflict; its equal moisture and plot 102's
    # equal values are none; hh-3's 104 was corrected on the device, so only the correction is current.
    if [(x["plot"], x["trait"]) for x in c["conflicts"]] != [(101, "grain_kg")]:
        fail(f"expected the one conflict plot 101 grain_kg, got {c['conflicts']}")
    values = sorted((v["origin"], v["value"]) for v in c["conflicts"][0]["values"])
    if values != [("hh-1", "4.77"), ("hh-2", "4.87")]:
        fail(f"conflict values {values}")
    rows = list(csv.DictReader(io.StringIO(run([exe, "export", "--db", work / "station-forward.db",
                                                 "--format", "csv-long"]).stdout.decode())))
    plot104 = [r["value"] for r in rows if r["plot"] == "104" and r["trait"] == "grain_kg"]
    if plot104 != ["4.54"]:
        fail(f"plot 104 grain_kg should be the correction 4.54 only, got {plot104}")
    print(f"ok: {len(orders)} orders give the same {first.count(chr(10))} logical rows and the same conflicts")


def case_faults(exe, work):
    t = Trial(exe, work)
    dev = t.device("hh-1")
    t.record(dev, "A", [(101, ["4.77", "20.7"]), (102, ["5.00"])])
    good = t.export(dev, work / "good.bundle")
    data = good.read_bytes()
    (work / "cut.bundle").write_bytes(data[: len(data) - 17])
    flipped = bytearray(data)
    flipped[len(data) // 2] ^= 0x40
    (work / "flip.bundle").write_bytes(bytes(flipped))
    # Another trial: the same spec under another code.
    other_spec = work / "other.toml"
    other_spec.write_text(DEMO_SPEC.read_text().replace('code = "SORG26"', 'code = "OTHR26"'))
    (work / "other").mkdir()
    other = Trial(exe, work / "other", spec=other_spec)
    odev = other.device("hh-1")
    other.record(odev, "A", [(101, ["1.00"])])
    other.export(odev, work / "other.bundle")
    # A device the station never provisioned: made from a copy of the station.
    shutil.copy(t.db, work / "twin.db")
    twin = work / "hh-x.db"
    run([exe, "device", "add", "--db", work / "twin.db", "--name", "hh-x", "--out", twin])
    t.record(twin, "X", [(101, ["9.99"])])
    t.export(twin, work / "stranger.bundle")

    before = sha256sum(t.db)
    expected = {
        "cut.bundle": "truncated sync bundle",
        "flip.bundle": "corrupted sync bundle: checksum mismatch",
        "other.bundle": "a bundle of trial OTHR26, but this database holds trial SORG26",
        "stranger.bundle": "device 'hh-x' was never provisioned by this station",
    }
    for name, message in expected.items():
        p = run([exe, "sync", "import", "--db", t.db, work / name], expect=1)
        err = p.stderr.decode()
        if str(work / name) not in err or message not in err:
            fail(f"{name}: expected a message naming the file and saying {message!r}, got:\n{err}")
        if sha256sum(t.db) != before:
            fail(f"{name}: the station file changed although the bundle was refused")
        integrity_ok(t.db)
    # The messages are each their own.
    if len(set(expected.values())) != len(expected):
        fail("messages not distinct")
    run([exe, "sync", "import", "--db", t.db, good])
    if sha256sum(t.db) == before:
        fail("the good bundle changed nothing")
    print("ok: four bad bundles refused with their own messages, station unchanged (sha256sum)")


def case_format(exe, work):
    t = Trial(exe, work)
    dev = t.device("hh-7")
    t.record(dev, "A", [(101, ["4.77"])])
    b = t.export(dev, work / "one.bundle").read_bytes()
    # docs/sync.md, "Bundle format"
    if b[:8] != b"PLWTSYNC":
        fail("magic")
    version, kind, clen = struct.unpack(">HBB", b[8:12])
    pos = 12
    code = b[pos:pos + clen].decode("ascii"); pos += clen
    digest = b[pos:pos + 32].hex(); pos += 32
    dlen = b[pos]; pos += 1
    device = b[pos:pos + dlen].decode("ascii"); pos += dlen
    (seq,) = struct.unpack(">Q", b[pos:pos + 8]); pos += 8
    ulen = b[pos]; pos += 1
    created = b[pos:pos + ulen].decode("ascii"); pos += ulen
    (plen,) = struct.unpack(">Q", b[pos:pos + 8]); pos += 8
    payload = b[pos:pos + plen]; pos += plen
    checksum = b[pos:]
    if (version, kind, code, device, seq) != (1, 1, "SORG26", "hh-7", 1):
        fail(f"header fields {(version, kind, code, device, seq)}")
    if len(checksum) != 32 or hashlib.sha256(b[:pos]).digest() != checksum:
        fail("the trailing 32 bytes are not the SHA-256 of everything before them")
    cert = sqlite(t.db, "SELECT sha256 FROM layout_certificate;").strip()
    if digest != cert:
        fail(f"the header's trial digest {digest} is not the station's layout certificate {cert}")
    if not created.endswith("Z") or len(payload) == 0:
        fail("creation time or payload")
    print(f"ok: {len(b)} bytes read by the documented layout; checksum verified with hashlib")


def case_exports(exe, work):
    t, _, bundles = make_three_devices(exe, work)
    run([exe, "sync", "import", "--db", t.db] + bundles)
    for fmt_ in ("csv", "csv-long", "csv-wide"):
        p = run([exe, "export", "--db", t.db, "--format", fmt_])
        text = p.stdout.decode()
        if "\r\n" not in text:
            fail(f"{fmt_}: RFC 4180 records end in CRLF")
        rows = list(csv.reader(io.StringIO(text, newline="")))
        if any(len(r) != len(rows[0]) for r in rows):
            fail(f"{fmt_}: ragged rows")
        if "1 plot/trait(s) in conflict left out" not in p.stderr.decode():
            fail(f"{fmt_}: no note of the unresolved conflict on stderr: {p.stderr.decode()!r}")
        if fmt_ == "csv-wide":
            header = rows[0]
            for h in ("grain_kg [kg]", "moisture_pct [%]", "height_cm [cm]", "lodging"):
                if h not in header:
                    fail(f"csv-wide header lacks {h!r}: {header}")
            by_plot = {r[0]: dict(zip(header, r)) for r in rows[1:]}
            if len(by_plot) != 24:
                fail("csv-wide: one row per plot expected (24)")
            if by_plot["101"]["grain_kg [kg]"] != "" or by_plot["101"]["moisture_pct [%]"] != "20.7":
                fail(f"csv-wide plot 101: conflict must be empty, equal moisture kept: {by_plot['101']}")
        else:
            keyed = [(r[0], r[3]) for r in rows[1:]]
            if ("101", "grain_kg") in keyed:
                fail(f"{fmt_}: the conflicting plot 101 grain_kg must be left out")
            if len(keyed) != len(set(keyed)):
                fail(f"{fmt_}: one row per plot and trait expected (equal values once)")
    j = json.loads(run([exe, "export", "--db", t.db, "--format", "json"]).stdout)
    if j["unresolved_conflicts"] != 1 or j["conflicts"] != [{"plot": 101, "trait": "grain_kg"}]:
        fail(f"json conflict fields: {j['unresolved_conflicts']}, {j['conflicts']}")
    if {x["name"]: x["unit"] for x in j["traits"]}["grain_kg"] != "kg":
        fail("json trait units")
    # analyze leaves the plot in conflict out (as a missing plot, saying why) and counts it; the other plots
    # get a grain weight at the station so that every treatment has values.
    others = [p for p in sorted(t.tags) if p not in (101, 102, 103, 104, 201, 202)]
    t.record(t.db, "station", [(p, [f"{4 + (p % 7) * 0.31:.2f}"]) for p in others])
    p = run([exe, "analyze", "--db", t.db, "--trait", "grain_kg", "--json"])
    a = json.loads(p.stdout)
    why = [m["reason"] for m in a["missing"] if m["plot"] == "101"]
    if a.get("unresolved_conflicts") != 1 or not why or "conflict" not in why[0]:
        fail(f"analyze: unresolved_conflicts {a.get('unresolved_conflicts')}, plot 101 missing reason {why}")
    if "1 plot(s) of grain_kg in conflict left out of the analysis" not in p.stderr.decode():
        fail(f"analyze: no stderr note: {p.stderr.decode()!r}")
    run([exe, "resolve", "--db", t.db, "--plot", 101, "--trait", "grain_kg", "--value", "4.8",
         "--reason", "sample re-weighed"])
    j = json.loads(run([exe, "export", "--db", t.db, "--format", "json"]).stdout)
    got = [o["value"] for o in j["observations"] if o["plot"] == 101 and o["trait"] == "grain_kg"]
    if j["unresolved_conflicts"] != 0 or got != ["4.80"]:
        fail(f"after resolve: {j['unresolved_conflicts']} conflicts, plot 101 grain {got}")
    integrity_ok(t.db)
    print("ok: csv, csv-long, csv-wide read by the csv module; json by the json module; conflict out, then resolved")


def case_audit(exe, work):
    t, _, bundles = make_three_devices(exe, work)
    run([exe, "sync", "import", "--db", t.db] + bundles)
    j = json.loads(run([exe, "audit", "--db", t.db, "--json"]).stdout)
    actions = [e["action"] for e in j["log"]]
    if not j["ok"] or actions.count("import") != 5 or actions.count("provision") != 3:
        fail(f"audit before the edit: ok={j['ok']}, actions {actions}")
    # By hand with the sqlite3 shell: the append-only trigger refuses, so it is dropped first.
    p = run([tool("sqlite3", "sqlite3"), t.db, "UPDATE audit_log SET detail = '{}' WHERE id = 4;"], expect=None)
    if p.returncode == 0:
        fail("the audit log accepted an UPDATE")
    sqlite(t.db, "DROP TRIGGER audit_log_no_update; UPDATE audit_log SET detail = "
                 "replace(detail, '\"observations\":4', '\"observations\":3') WHERE id = 4;")
    p = run([exe, "audit", "--db", t.db], expect=1)
    if "broken at entry 4" not in p.stderr.decode():
        fail(f"audit should name entry 4: {p.stderr.decode()}")
    j = json.loads(run([exe, "audit", "--db", t.db, "--json"], expect=1).stdout)
    if j["first_broken"] != 4:
        fail(f"first_broken {j['first_broken']}")
    print("ok: audit intact, then an entry edited with the sqlite3 shell is named (exit 1)")


def case_blind(exe, work):
    spec = work / "blind.toml"
    spec.write_text(DEMO_SPEC.read_text().replace("blind = false", "blind = true"))
    t = Trial(exe, work, spec=spec)
    dev = t.device("hh-b")
    labels = [l.strip() for l in sqlite(t.db, "SELECT label FROM treatment;").splitlines()]
    descriptions = [d.strip() for d in sqlite(t.db, "SELECT description FROM treatment;").splitlines() if d.strip()]
    raw = dev.read_bytes()
    for word in labels + descriptions:
        if word.encode() in raw:
            fail(f"the blind handheld's file holds {word!r}")
    t.record(dev, "A", [(101, ["4.77"])])
    rows = list(csv.DictReader(io.StringIO(run([exe, "export", "--db", dev, "--format", "csv-long"]).stdout.decode())))
    if not rows or not rows[0]["treatment"].startswith("T0"):
        fail(f"the handheld's export should show a neutral code: {rows}")
    out = run([exe, "record", "--db", dev, "--observer", "A", "--lines"], stdin=(t.tags[102] + "\n/skip\n").encode())
    text = out.stdout.decode()
    if "(blind)" not in text or any(l in text for l in labels):
        fail(f"the recorder on the blind handheld: {text}")
    if sqlite(dev, "SELECT DISTINCT device FROM observation;").strip() != "hh-b":
        fail("the recorder should store the provisioned name by default")
    b = t.export(dev, work / "b.bundle")
    run([exe, "sync", "import", "--db", t.db, b])
    rows = list(csv.DictReader(io.StringIO(run([exe, "export", "--db", t.db, "--format", "csv-long"]).stdout.decode())))
    if rows[0]["treatment"] not in labels:
        fail("at the station the value is shown with the treatment's own label")
    print(f"ok: no treatment label in the blind handheld's file ({len(labels)} labels checked)")


# Two traits added to the running trial; the comment names a treatment, which must never reach a blind handheld.
NEW_TRAITS = """# scored after the hail of 2 March; worst on Line 22-07
[[traits]]
name = "hail_score"
label = "Hail damage"
kind = "score"
min = 1
max = 5

[[traits]]
name = "panicle_cm"
unit = "cm"
kind = "number"
min = 0
max = 45.5
decimals = 1
"""


def line_of(text, needle):
    """1-based line of the first line containing `needle` (counted in the file itself)."""
    return next(i + 1 for i, l in enumerate(text.splitlines()) if needle in l)


def case_traits(exe, work):
    t = Trial(exe, work)
    dev = t.device("hh-1")
    new = work / "new-traits.toml"
    new.write_text(NEW_TRAITS)
    spec_before = sqlite(t.db, "SELECT spec_toml FROM trial;")
    cert_before = sqlite(t.db, "SELECT sha256 FROM layout_certificate;")
    out = run([exe, "trait", "add", "--db", t.db, "--file", new, "--observer", "M. Banda"]).stdout.decode()
    if "added trait hail_score" not in out or "added trait panicle_cm [cm]" not in out:
        fail(f"trait add says: {out}")
    # Nothing recorded changed: the spec text is the demo file's text, the certificate as it was.
    if sqlite(t.db, "SELECT spec_toml FROM trial;") != spec_before or spec_before.rstrip("\n") != DEMO_SPEC.read_text().rstrip("\n"):
        fail("the stored spec text changed")
    if sqlite(t.db, "SELECT sha256 FROM layout_certificate;") != cert_before:
        fail("the layout certificate changed")
    run([exe, "verify", "--db", t.db])
    # Each stored definition, read by Python's TOML reader, is the file's table (TOML v1.0.0).
    given = tomllib.loads(NEW_TRAITS)["traits"]
    rows = json.loads(sqlite(t.db, "SELECT json_group_array(json_array(name, position, definition, added_by)) "
                                   "FROM (SELECT * FROM trait_addition ORDER BY position);"))
    if [(r[0], r[1], r[3]) for r in rows] != [("hail_score", TRAITS, "M. Banda"), ("panicle_cm", TRAITS + 1, "M. Banda")]:
        fail(f"trait_addition rows {rows}")
    for r, table in zip(rows, given):
        if tomllib.loads(r[2]) != {"traits": [table]}:
            fail(f"definition of {r[0]} reads {tomllib.loads(r[2])}, the file gave {table}")
        if "#" in r[2]:
            fail(f"definition of {r[0]} keeps a comment: {r[2]!r}")
    traits_sql = "SELECT * FROM trait ORDER BY position;"
    if sqlite(t.db, "SELECT name FROM trait ORDER BY position;").split()[-2:] != ["hail_score", "panicle_cm"]:
        fail("the added traits are not after the spec's")

    # Refused adds: each names the file, the line and the key, exits 1, and leaves the file as it was.
    before = sha256sum(t.db)
    bad_kind = work / "bad-kind.toml"
    bad_kind.write_text('[[traits]]\nname = "tiller_count"\nunit = "tillers"\nkind = "tally"\n')
    name_line = line_of(NEW_TRAITS, 'name = "hail_score"')
    refusals = [(new, f"{new}:{name_line}: traits[1].name: trial SORG26 already has a trait named 'hail_score'"),
                (bad_kind, f"{bad_kind}:4: traits[1].kind: unknown kind 'tally'")]
    for f, message in refusals:
        err = run([exe, "trait", "add", "--db", t.db, "--file", f], expect=1).stderr.decode()
        if message not in err:
            fail(f"{f.name}: expected {message!r} on stderr, got {err!r}")
        if sha256sum(t.db) != before:
            fail(f"{f.name}: the station file changed although the trait was refused")
    dev_before = sha256sum(dev)
    other = work / "other.toml"
    other.write_text('[[traits]]\nname = "awns"\nkind = "text"\n')
    err = run([exe, "trait", "add", "--db", dev, "--file", other], expect=1).stderr.decode()
    if "device 'hh-1': traits are added at the station" not in err or str(dev) not in err:
        fail(f"the handheld should refuse trait add naming itself: {err!r}")
    if sha256sum(dev) != dev_before:
        fail("the handheld's file changed on a refused trait add")

    # The station's bundle brings the traits; twice changes nothing; an older bundle after it adds nothing.
    shutil.copy(dev, work / "hh-1-copy.db")
    run([exe, "sync", "export", "--db", t.db, "--for", "hh-1", "--out", work / "to-hh-1.bundle"])
    out = run([exe, "sync", "import", "--db", dev, work / "to-hh-1.bundle"]).stdout.decode()
    if "2 new traits" not in out:
        fail(f"the handheld's import says: {out}")
    after = sha256sum(dev)
    out = run([exe, "sync", "import", "--db", dev, work / "to-hh-1.bundle"]).stdout.decode()
    if "imported before: nothing changed" not in out or sha256sum(dev) != after:
        fail(f"importing the station's bundle twice changed the handheld: {out}")
    if sqlite(dev, traits_sql) != sqlite(t.db, traits_sql) or \
            sqlite(dev, "SELECT * FROM trait_addition ORDER BY position;") != \
            sqlite(t.db, "SELECT * FROM trait_addition ORDER BY position;"):
        fail("the handheld's traits are not the station's")
    integrity_ok(dev)
    # Another station bundle after it (the same traits again): nothing new.
    run([exe, "sync", "export", "--db", t.db, "--for", "hh-1", "--out", work / "to-hh-1.2.bundle"])
    j = json.loads(run([exe, "sync", "import", "--db", dev, work / "to-hh-1.2.bundle", "--json"]).stdout)
    if j["bundles"][0]["traits"] != 0 or j["bundles"][0]["duplicates"] != 2:
        fail(f"the second station bundle: {j}")
    # In the other order on a copy of the handheld: bundle 2 first, then 1; the same traits.
    run([exe, "sync", "import", "--db", work / "hh-1-copy.db", work / "to-hh-1.2.bundle", work / "to-hh-1.bundle"])
    if sqlite(work / "hh-1-copy.db", traits_sql) != sqlite(t.db, traits_sql):
        fail("bundles in the other order give other traits")

    # The handheld's recorder asks for the new traits after the spec's seven.
    lines = [t.tags[101], "4.77"] + [""] * (TRAITS - 1) + ["3", "22.5"]
    out = run([exe, "record", "--db", dev, "--observer", "A. Mwangi", "--lines"],
              stdin=("\n".join(lines) + "\n").encode()).stdout.decode()
    if "saved hail_score = 3" not in out or "saved panicle_cm = 22.5 cm" not in out:
        fail(f"the handheld's recorder did not take the added traits: {out}")
    rows = list(csv.DictReader(io.StringIO(run([exe, "export", "--db", dev, "--format", "csv-long"]).stdout.decode())))
    if {(r["trait"], r["value"]) for r in rows} != {("grain_kg", "4.77"), ("hail_score", "3"), ("panicle_cm", "22.5")}:
        fail(f"the handheld's export: {rows}")
    # Its bundle brings the values to the station (and no trait: the station is the only source).
    back = t.export(dev, work / "hh-1.1.bundle")
    run([exe, "sync", "import", "--db", t.db, back])
    wide = list(csv.DictReader(io.StringIO(run([exe, "export", "--db", t.db, "--format", "csv-wide"]).stdout.decode())))
    r101 = next(r for r in wide if r["plot"] == "101")
    if r101["hail_score"] != "3" or r101["panicle_cm [cm]"] != "22.5":
        fail(f"the station's csv-wide: {r101}")
    for db in (t.db, dev):
        if not json.loads(run([exe, "audit", "--db", db, "--json"]).stdout)["ok"]:
            fail(f"{db}: audit log broken")
    actions = [e["action"] for e in json.loads(run([exe, "audit", "--db", t.db, "--json"]).stdout)["log"]]
    if actions.count("trait") != 1:
        fail(f"the station's audit log should hold one 'trait' entry: {actions}")

    # A blind trial: the handheld receives the traits, and no word of the trait file's comment.
    spec = work / "blind.toml"
    spec.write_text(DEMO_SPEC.read_text().replace("blind = false", "blind = true"))
    (work / "blind").mkdir()
    b = Trial(exe, work / "blind", spec=spec)
    bdev = b.device("hh-b")
    run([exe, "trait", "add", "--db", b.db, "--file", new])
    run([exe, "sync", "export", "--db", b.db, "--for", "hh-b", "--out", work / "to-hh-b.bundle"])
    run([exe, "sync", "import", "--db", bdev, work / "to-hh-b.bundle"])
    labels = [l.strip() for l in sqlite(b.db, "SELECT label FROM treatment;").splitlines()]
    raw = bdev.read_bytes() + (work / "to-hh-b.bundle").read_bytes()
    if b"hail_score" not in raw:
        fail("the blind handheld did not receive the traits")
    for word in labels + ["Line 22-07"]:
        if word.encode() in raw:
            fail(f"the blind handheld's file or bundle holds {word!r}")
    print(f"ok: 2 traits added (spec text and certificate kept, definitions equal to the file by tomllib), "
          f"3 refusals harmless (sha256sum), reached the handheld once, recorded there and sent back")


def case_geojson(exe, work):
    spec = work / "georef.toml"
    # The demo spec with the reference stake placed on the Earth (an invented position), so GeoJSON can be made.
    spec.write_text(DEMO_SPEC.read_text().replace("alley_m = 1.5\n",
                                                  "alley_m = 1.5\norigin = { lat_deg = -27.43, lon_deg = 151.88 }\n", 1))
    t = Trial(exe, work, spec=spec)
    devices = {n: t.device(n) for n in ("hh-1", "hh-2")}
    t.record(devices["hh-1"], "A. Mwangi", [(101, ["4.77", "20.7"]), (102, ["5.10"])])
    t.record(devices["hh-2"], "B. Osei", [(101, ["4.87", "20.7"]), (102, ["5.10"])])
    run([exe, "sync", "import", "--db", t.db, t.export(devices["hh-1"], work / "1.bundle"),
         t.export(devices["hh-2"], work / "2.bundle")])
    out = work / "plots.geojson"
    p = run([exe, "export", "--db", t.db, "--format", "geojson", "--out", out])
    if "1 plot/trait(s) in conflict left out" not in p.stderr.decode():
        fail(f"no note of the conflict on stderr: {p.stderr.decode()!r}")
    doc = json.loads(out.read_text())
    if doc["unresolved_conflicts"] != 1 or doc["conflicts"] != [{"plot": 101, "trait": "grain_kg"}]:
        fail(f"foreign members: {doc.get('unresolved_conflicts')}, {doc.get('conflicts')}")
    props = {f["properties"]["plot"]: f["properties"] for f in doc["features"]}
    if "grain_kg" in props[101] or props[101].get("moisture_pct") != 20.7 or props[102].get("grain_kg") != 5.1:
        fail(f"properties of plots 101 and 102: {props[101]}, {props[102]}")
    # GDAL reads the file as GeoJSON (RFC 7946) and sees plot 101 without a grain weight.
    q = run([tool("ogrinfo", "gdal-bin"), "-ro", "-q", "-dialect", "SQLite", "-sql",
             f'SELECT plot, grain_kg, moisture_pct FROM "{out.stem}" WHERE plot IN (101, 102) ORDER BY plot', out])
    text = q.stdout.decode()
    got = re.findall(r"plot \(Integer\) = (\d+)\s+grain_kg \(Real\) = (\S+)\s+moisture_pct \(Real\) = (\S+)", text)
    if got != [("101", "(null)", "20.7"), ("102", "5.1", "(null)")]:
        fail(f"ogrinfo reads {got} from:\n{text[:800]}")
    print("ok: the conflicting value left out of the GeoJSON and counted; ogrinfo reads plot 101 without it")


CASES = {"orders": case_orders, "faults": case_faults, "format": case_format, "exports": case_exports,
         "audit": case_audit, "blind": case_blind, "traits": case_traits, "geojson": case_geojson}

if __name__ == "__main__":
    if len(sys.argv) != 4 or sys.argv[1] not in CASES:
        print(__doc__)
        sys.exit(2)
    work = pathlib.Path(sys.argv[3])
    if work.exists():
        shutil.rmtree(work)
    work.mkdir(parents=True)
    CASES[sys.argv[1]](pathlib.Path(sys.argv[2]), work)
