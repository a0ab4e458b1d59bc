#!/usr/bin/python3
"""The field commands end to end, checked with outside tools and independent computations:

  map       `plotwright map` of the demo trial as SVG, PDF and PNG: qpdf --check accepts the PDF, pdftotext
            (poppler) finds every plot id in it, Python's xml.etree parses the SVG and finds every plot id,
            the PNG has the signature and IHDR chunk of the PNG specification (ISO/IEC 15948, from memory);
            --treatments is refused on a blind trial.
  geojson   `plotwright export --format geojson`: GDAL's ogrinfo opens it and its SQLite dialect's geodesic
            ST_Area(geometry, 1) matches the plot size of the spec within 0.5 %; the RFC 7946 rules (closed rings
            of 5 positions, exterior counter-clockwise by the shoelace sign, longitude first, no "crs"); every
            corner agrees with GeographicLib's Geodesic.WGS84.Direct (python3-geographiclib) from the stake;
            the reference tool reproduces Karney's worked example (Karney 2013, "Algorithms for geodesics",
            J. Geodesy 87:43-55, direct problem: 40 deg, azimuth 30 deg, 10 000 km -> 41.79331020506 deg,
            137.84490004377 deg, from memory); treatment left out on a blind trial; refused without a stake.
  stakeout  `plotwright stakeout` corner distances against the plot centres of `plotwright plots` and the
            plot sizes of the spec, with the orientation rule of docs/design.md, computed here; WGS 84 columns
            against Geodesic.WGS84.Direct.
  nmea      `plotwright stakeout --nmea FILE` without a terminal on tests/data/nmea/sentences.nmea: one line per
            good fix, one refusal per bad line, the counts; the distance and azimuth to the corner against
            Geodesic.WGS84.Inverse; a last line cut short is refused, not a crash.
  tui       the stake-out screen in a 32x12 tmux terminal: the fix, the corner, next and previous keys.

Usage: field_checks.py CASE PLOTWRIGHT WORKDIR
"""
import csv
import io
import json
import math
import pathlib
import re
import shutil
import subprocess
import sys
import time
import tomllib
import xml.etree.ElementTree as ET

import e2e_common
from e2e_common import fail


def run(args, **kw):
    return e2e_common.run(args, text=False, **kw)


ROOT = pathlib.Path(__file__).resolve().parents[2]
DEMO = ROOT / "layouts" / "demo.toml"
FACTORIAL = ROOT / "layouts" / "rcbd-factorial.toml"   # stake at -27.4321 151.8765, x bearing 120, guards
NMEA = ROOT / "tests" / "data" / "nmea" / "sentences.nmea"


def text(args, **kw):
    return run(args, **kw).stdout.decode()


def design(pw, spec, db):
    run([pw, "design", spec, "--db", db])


def plots(pw, db):
    return list(csv.DictReader(io.StringIO(text([pw, "plots", "--db", db]))))


def geodesic():
    try:
        from geographiclib.geodesic import Geodesic
    except ImportError:
        fail("python3-geographiclib (Debian) is needed for the independent geodesic computation")
    return Geodesic.WGS84


def with_changes(spec_path, work, name, lines_after_trial=(), origin=None, blind=None):
    """A copy of a spec with [trial] blind and/or [field.origin] changed, for the refusal cases."""
    t = spec_path.read_text()
    if blind is not None:
        value = f"blind = {'true' if blind else 'false'}"
        if re.search(r"^blind = \w+", t, flags=re.M):
            t = re.sub(r"^blind = \w+", value, t, flags=re.M)
        else:
            t = t.replace("[trial]\n", "[trial]\n" + value + "\n", 1)
    if origin is not None:
        t += f"\n[field.origin]\nlat_deg = {origin[0]}\nlon_deg = {origin[1]}\ndescription = \"test stake\"\n"
    out = work / name
    out.write_text(t)
    return out


def extents(spec):
    """Plot extents along x and y by the rule of docs/design.md: the gradient is taken along the field axis
    nearest its bearing (r = bearing - x_bearing; along x when r is within 45 deg of 0 or 180); the plot's
    length lies along the gradient."""
    f = spec["field"]
    r = (spec["gradient"]["bearing_deg"] - f.get("x_bearing_deg", 90)) % 360
    along_x = min(r, abs(r - 180), 360 - r) <= 45
    L, W = f["plot_length_m"], f["plot_width_m"]
    return (L, W) if along_x else (W, L)


def expected_corners(spec, rows):
    wx, wy = extents(spec)
    out = []
    for r in rows:
        cx, cy = float(r["x_m"]), float(r["y_m"])
        for k, (sx, sy) in enumerate([(-1, -1), (1, -1), (1, 1), (-1, 1)], start=1):
            out.append((int(r["plot"]), k, cx + sx * wx / 2, cy + sy * wy / 2))
    return out


def direct(spec, x, y):
    """Field (x, y) to WGS 84 with GeographicLib's geodesic from the stake: the base line has compass bearing
    b, the y axis b - 90 (docs/design.md), so east = x sin b - y cos b, north = x cos b + y sin b."""
    f = spec["field"]
    b = math.radians(f.get("x_bearing_deg", 90))
    e = x * math.sin(b) - y * math.cos(b)
    n = x * math.cos(b) + y * math.sin(b)
    o = f["origin"]
    if e == 0 and n == 0:
        return o["lat_deg"], o["lon_deg"]
    g = geodesic().Direct(o["lat_deg"], o["lon_deg"], math.degrees(math.atan2(e, n)), math.hypot(e, n))
    return g["lat2"], g["lon2"]


def case_map(pw, work):
    db = work / "demo.db"
    design(pw, DEMO, db)
    ids = [r["plot"] for r in plots(pw, db)]
    for ext in ["svg", "pdf", "png"]:
        run([pw, "map", "--db", db, "--out", work / f"demo.{ext}"])
    run([pw, "map", "--db", db, "--out", work / "demo-treatments.pdf", "--treatments"])
    for pdf in ["demo.pdf", "demo-treatments.pdf"]:
        q = subprocess.run(["qpdf", "--check", str(work / pdf)], capture_output=True, text=True)
        if q.returncode != 0:
            fail(f"qpdf --check refused {pdf}: {q.stdout}{q.stderr}")
        words = set(text(["pdftotext", work / pdf, "-"]).split())
        missing = [i for i in ids if i not in words]
        if missing:
            fail(f"pdftotext finds no plot ids {missing} in {pdf}")
    print("ok: qpdf --check accepts the PDFs; pdftotext finds all", len(ids), "plot ids")
    root = ET.parse(work / "demo.svg").getroot()
    texts = {t.text for t in root.iter() if t.tag.endswith("text")}
    missing = [i for i in ids if i not in texts]
    if missing:
        fail(f"the SVG has no text for plots {missing}")
    print("ok: the SVG parses as XML and names every plot")
    png = (work / "demo.png").read_bytes()
    if png[:8] != b"\x89PNG\r\n\x1a\n" or png[12:16] != b"IHDR":
        fail("demo.png lacks the PNG signature or IHDR chunk")
    w, h = int.from_bytes(png[16:20], "big"), int.from_bytes(png[20:24], "big")
    if not (300 < w < 5000 and 300 < h < 5000):
        fail(f"demo.png is {w}x{h}")
    print(f"ok: the PNG opens, {w}x{h}")
    blind_db = work / "blind.db"
    design(pw, with_changes(DEMO, work, "blind.toml", blind=True), blind_db)
    p = run([pw, "map", "--db", blind_db, "--out", work / "blind.svg", "--treatments"], expect=1)
    if b"blind" not in p.stderr:
        fail(f"the refusal on a blind trial does not say why: {p.stderr!r}")
    run([pw, "map", "--db", blind_db, "--out", work / "blind.svg"])
    print("ok: --treatments refused on a blind trial, the plain map drawn")


def shoelace(ring):
    return sum(a[0] * b[1] - b[0] * a[1] for a, b in zip(ring, ring[1:])) / 2


def case_geojson(pw, work):
    g = geodesic()
    k = g.Direct(40, 0, 30, 10e6)
    if abs(k["lat2"] - 41.79331020506) > 1e-10 or abs(k["lon2"] - 137.84490004377) > 1e-10:
        fail(f"the reference tool does not reproduce Karney's example: {k}")
    spec = tomllib.loads(FACTORIAL.read_text())
    db = work / "f.db"
    design(pw, FACTORIAL, db)
    rows = plots(pw, db)
    first = rows[0]
    run([pw, "record", "--db", db, "--observer", "field test", "--lines"], stdin=f"{first['tag']}\n7.25\n".encode())
    out = work / "plots.geojson"
    run([pw, "export", "--db", db, "--format", "geojson", "--out", out])
    doc = json.loads(out.read_text())
    if doc.get("type") != "FeatureCollection" or "crs" in doc:
        fail("not a FeatureCollection without crs")
    feats = doc["features"]
    if [f["properties"]["plot"] for f in feats] != [int(r["plot"]) for r in rows]:
        fail("features are not the plots in walking order")
    corners = {(p, c): (x, y) for p, c, x, y in expected_corners(spec, rows)}
    lat0, lon0 = spec["field"]["origin"]["lat_deg"], spec["field"]["origin"]["lon_deg"]
    worst = 0.0
    for f in feats:
        ring = f["geometry"]["coordinates"][0]
        if f["geometry"]["type"] != "Polygon" or len(f["geometry"]["coordinates"]) != 1:
            fail("a plot is not a Polygon with one ring")
        if len(ring) != 5 or ring[0] != ring[-1]:
            fail(f"plot {f['properties']['plot']}: ring not closed with 5 positions")
        if shoelace(ring) <= 0:
            fail(f"plot {f['properties']['plot']}: exterior ring is clockwise")
        for lon, lat in ring:   # longitude first: the field lies near 151.88 E, 27.43 S
            if not (151.8 < lon < 151.9 and -27.5 < lat < -27.4):
                fail(f"position {lon},{lat} is not longitude, latitude near the stake")
        for c in range(4):
            x, y = corners[(f["properties"]["plot"], c + 1)]
            lat, lon = direct(spec, x, y)
            d = g.Inverse(lat, lon, ring[c][1], ring[c][0])["s12"]
            worst = max(worst, d)
        if "treatment" not in f["properties"]:
            fail("treatment missing on an open trial")
    if worst > 0.005:
        fail(f"a corner is {worst:.4f} m from GeographicLib's geodesic position")
    print(f"ok: RFC 7946 rings; corners within {worst * 1000:.2f} mm of Geodesic.WGS84.Direct")
    if feats[0]["properties"].get("grain_kg") != 7.25:
        fail(f"the recorded value is not a property: {feats[0]['properties']}")
    print("ok: the latest observation is a property")
    layer = out.stem
    q = run(["ogrinfo", "-ro", "-q", "-dialect", "SQLite", "-sql",
             f"SELECT plot, ST_Area(geometry, 1) AS area_m2 FROM \"{layer}\"", out])
    areas = [float(a) for a in re.findall(r"area_m2 \(Real\) = ([0-9.]+)", q.stdout.decode())]
    want = spec["field"]["plot_length_m"] * spec["field"]["plot_width_m"]
    if len(areas) != len(rows):
        fail(f"ogrinfo listed {len(areas)} areas for {len(rows)} plots:\n{q.stdout.decode()[:500]}")
    bad = [a for a in areas if abs(a - want) / want > 0.005]
    if bad:
        fail(f"geodesic areas {bad[:5]} differ from {want} m2 by more than 0.5 %")
    print(f"ok: ogrinfo's geodesic areas {min(areas):.4f}..{max(areas):.4f} m2 match {want} m2 within 0.5 %")
    blind_db = work / "fblind.db"
    design(pw, with_changes(FACTORIAL, work, "fblind.toml", blind=True), blind_db)
    b = json.loads(text([pw, "export", "--db", blind_db, "--format", "geojson"]))
    if any("treatment" in f["properties"] for f in b["features"]):
        fail("a blind trial's GeoJSON names treatments")
    demo_db = work / "demo.db"
    design(pw, DEMO, demo_db)
    p = run([pw, "export", "--db", demo_db, "--format", "geojson"], expect=1)
    if b"field.origin" not in p.stderr:
        fail(f"the refusal without a stake position does not name field.origin: {p.stderr!r}")
    print("ok: blind trial without treatments; refused without the stake's position")


def case_stakeout(pw, work):
    for spec_path in [DEMO, FACTORIAL]:
        spec = tomllib.loads(spec_path.read_text())
        db = work / (spec_path.stem + ".db")
        design(pw, spec_path, db)
        rows = plots(pw, db)
        got = list(csv.DictReader(io.StringIO(text([pw, "stakeout", "--db", db, "--format", "csv"]))))
        want = expected_corners(spec, rows)
        if len(got) != len(want):
            fail(f"{spec_path.name}: {len(got)} corners, expected {len(want)}")
        for g, (p, c, x, y) in zip(got, want):
            if (int(g["plot"]), int(g["corner"])) != (p, c):
                fail(f"{spec_path.name}: corner order {g['plot']} c{g['corner']}, expected {p} c{c}")
            if abs(float(g["x_m"]) - x) > 5e-4 or abs(float(g["y_m"]) - y) > 5e-4:
                fail(f"{spec_path.name}: plot {p} c{c} at {g['x_m']},{g['y_m']}, expected {x:.3f},{y:.3f}")
            if abs(float(g["diagonal_m"]) - math.hypot(x, y)) > 5e-4:
                fail(f"{spec_path.name}: plot {p} c{c} diagonal {g['diagonal_m']}")
            if "origin" in spec["field"]:
                lat, lon = direct(spec, x, y)
                d = geodesic().Inverse(lat, lon, float(g["lat_deg"]), float(g["lon_deg"]))["s12"]
                if d > 0.005:
                    fail(f"{spec_path.name}: plot {p} c{c} is {d:.4f} m from the geodesic position")
            elif "lat_deg" in g:
                fail("WGS 84 columns without a stake position")
        txt = text([pw, "stakeout", "--db", db, "--format", "txt"])
        if f"{rows[0]['plot']}" not in txt or "x_m" not in txt:
            fail("the printable table lacks its header or plots")
        print(f"ok: {spec_path.name}: {len(got)} corners match the spec's geometry"
              + (" and GeographicLib's positions" if "origin" in spec["field"] else ""))


def case_nmea(pw, work):
    spec = tomllib.loads(FACTORIAL.read_text())
    db = work / "f.db"
    design(pw, FACTORIAL, db)
    corners = list(csv.DictReader(io.StringIO(text([pw, "stakeout", "--db", db]))))
    p = run([pw, "stakeout", "--db", db, "--nmea", NMEA], stdin=b"")
    out, err = p.stdout.decode().splitlines(), p.stderr.decode()
    # tests/data/nmea/README.md: 9 GGA/RMC with sound checksums, one of them "no fix": 8 good fixes.
    if len(out) != 8:
        fail(f"expected 8 lines for 8 good fixes, got {len(out)}:\n" + "\n".join(out))
    lines = NMEA.read_text().splitlines()
    comments = sum(1 for l in lines if l.startswith("#"))
    summary = f"{len(lines)} lines: 9 accepted, 2 ignored, {4 + comments} refused"
    if summary not in err:
        fail(f"expected the summary '{summary}' on stderr:\n{err}")
    for needle in ["checksum is 7C, the sentence says 1D", "checksum is 25, the sentence says 3C", "truncated",
                   "more than the 82"]:
        if needle not in err:
            fail(f"no refusal saying '{needle}':\n{err}")
    last = out[-1]
    m = re.search(r" (-?\d+\.\d+) (-?\d+\.\d+) .*-> plot (\d+) c1 \w+: ([0-9.]+) m at ([0-9.]+) deg", last)
    if not m:
        fail(f"cannot read the last fix line: {last}")
    lat, lon, plot, dist, azi = float(m[1]), float(m[2]), int(m[3]), float(m[4]), float(m[5])
    c = corners[0]
    if int(c["plot"]) != plot:
        fail("the target is not the first corner in stake order")
    inv = geodesic().Inverse(lat, lon, float(c["lat_deg"]), float(c["lon_deg"]))
    if abs(inv["s12"] - dist) > 0.002 or abs((inv["azi1"] % 360) - azi) > 0.01:
        fail(f"distance {dist} m at {azi} deg, GeographicLib's Inverse gives {inv['s12']:.3f} m at {inv['azi1'] % 360:.2f}")
    print(f"ok: 8 good fixes, {4 + comments} refusals with reasons; {dist} m at {azi} deg agrees with Geodesic.Inverse")
    cut = work / "cut.nmea"
    good = [l for l in lines if l.startswith("$GNGGA,010203")][0]
    cut.write_text(good + "\n" + good[:30])   # the receiver unplugged mid-sentence
    p = run([pw, "stakeout", "--db", db, "--nmea", cut], stdin=b"")
    if len(p.stdout.decode().splitlines()) != 1 or "2 lines: 1 accepted, 0 ignored, 1 refused" not in p.stderr.decode():
        fail(f"a line cut short: {p.stdout!r} {p.stderr!r}")
    print("ok: a last line cut short is refused and counted")


def case_tui(pw, work):
    tmux = shutil.which("tmux")
    if not tmux:
        fail("tmux (Debian package tmux) is needed to drive the stake-out screen")
    db = work / "f.db"
    design(pw, FACTORIAL, db)
    sock = "pw-stakeout-test"
    t = lambda *a: subprocess.run([tmux, "-L", sock, *map(str, a)], capture_output=True, text=True)
    t("-f", "/dev/null", "new-session", "-d", "-x", "32", "-y", "12", "env", "TERM=xterm", pw, "stakeout", "--db", db,
      "--nmea", NMEA, "--nmea-rate", "50")
    try:
        def wait_for(needle):
            end = time.time() + 8
            while time.time() < end:
                s = t("capture-pane", "-p").stdout
                if needle in s:
                    return s
                time.sleep(0.1)
            fail(f"the screen never showed {needle!r}:\n{t('capture-pane', '-p').stdout}")
        s = wait_for("Fix no fix")   # the file's last sentence says "no fix"
        if "bad 10" not in s:
            fail(f"the status bar should count 10 bad lines:\n{s}")
        if any(len(l) > 32 for l in s.splitlines()):
            fail("a line is wider than 32 columns")
        t("send-keys", "n")
        s = wait_for("c2, 2 of")
        t("send-keys", "p")
        wait_for("c1, 1 of")
        print("ok: the 32x12 screen shows the fix state, the bad-line count, and steps through corners")
        t("send-keys", "q")
        time.sleep(0.5)
    finally:
        t("kill-server")


def main():
    case, pw, work = sys.argv[1], pathlib.Path(sys.argv[2]), pathlib.Path(sys.argv[3])
    shutil.rmtree(work, ignore_errors=True)
    work.mkdir(parents=True)
    {"map": case_map, "geojson": case_geojson, "stakeout": case_stakeout, "nmea": case_nmea, "tui": case_tui}[case](pw, work)


if __name__ == "__main__":
    main()
