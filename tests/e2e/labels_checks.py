#!/usr/bin/python3
"""End-to-end checks of printable plot labels (`plotwright tags --format pdf`, `--format png --dpi N`), one case
per ctest entry.

Usage: labels_checks.py CASE PLOTWRIGHT WORKDIR      CASE: sheets | roll | thermal | refusals

What the project writes is judged by tools from outside it:
  - qpdf --check (qpdf) accepts every PDF; pdftoppm -r 300 (poppler-utils) rasterises every page; pdftotext
    (poppler-utils) reads the printed text back;
  - zbarimg (zbar-tools) decodes every label. zbarimg misses symbols on a page holding a grid of many
    alike symbols (a known zbar limitation, Debian bug #869234), so each label's cell is cut out of the 300 dpi
    page, at the place the sheet's geometry gives, and decoded alone: every plot's payload must be found exactly
    once over all cells of all pages, in print order, and nothing else;
  - expected payloads are computed here with ISO/IEC 7064 MOD 37,36 written from the standard's recurrence
    (not from project code);
  - page sizes are ISO 216 (A4, 210 x 297 mm) and ANSI/ASME Y14.1 (US Letter, 8.5 x 11 in, 25.4 mm/in);
  - PNG files are read here with Python's zlib and struct from the W3C PNG specification (signature, IHDR,
    pHYs, IDAT, the five row filters), and the QR module size is measured on the pixels from the ISO/IEC 18004
    finder pattern (dark 1, light 1, dark 3, light 1, dark 1 modules across its centre).
"""
import csv
import io
import json
import math
import pathlib
import shutil
import struct
import subprocess
import sys
import xml.dom.minidom
import zlib

from e2e_common import fail, run, tool

ROOT = pathlib.Path(__file__).resolve().parents[2]
DEMO_SPEC = ROOT / "layouts" / "demo.toml"
DPI = 300                       # pdftoppm -r 300
PAGE_MM = {"a4": (210.0, 297.0), "letter": (8.5 * 25.4, 11.0 * 25.4)}   # ISO 216; ANSI/ASME Y14.1


def mod37_36_check(data):
    """ISO/IEC 7064 MOD 37,36 hybrid system from the standard's recurrence: P starts at M = 36; for each
    character P = (2 * (((P + v) mod M) or M)) mod (M + 1); check = (M + 1 - P) mod M."""
    alphabet = "0123456789ABCDEFGHIJKLMNOPQRSTUVWXYZ"
    m = 36
    p = m
    for ch in data:
        t = (p + alphabet.index(ch)) % m
        if t == 0:
            t = m
        p = (2 * t) % (m + 1)
    return alphabet[(m + 1 - p) % m]


# ---- the trial -------------------------------------------------------------------------------------------

def make_trial(pw, work, blocks=9, blind=False, name="trial"):
    """The demo spec with more blocks (so sheets run over several pages), optionally blind."""
    text = DEMO_SPEC.read_text()
    out = []
    for line in text.splitlines():
        s = line.strip()
        if s.startswith("blocks ="):
            line = f"blocks = {blocks}"
        elif s.startswith("blind ="):
            line = f"blind = {'true' if blind else 'false'}"
        out.append(line)
    spec = work / f"{name}.toml"
    spec.write_text("\n".join(out) + "\n")
    db = work / f"{name}.db"
    if db.exists():
        db.unlink()
    run([pw, "design", spec, "--db", db])
    rows = list(csv.DictReader(io.StringIO(run([pw, "plots", "--db", db, "--format", "csv"]).stdout)))
    if len(rows) < 2:
        fail(f"the trial has {len(rows)} plots")
    code = next(l.split("=", 1)[1].strip().strip('"') for l in out if l.strip().startswith("code ="))
    for r in rows:
        r["payload"] = f"PW1:{code}-{r['plot']}-{mod37_36_check(code + r['plot'])}"
        r["human"] = r["payload"][4:]
    return db, code, rows


def in_order(rows, order):
    if order == "walk":
        return sorted(rows, key=lambda r: int(r["walk_order"]))
    # Stake order (docs/tags.md): field row, then column, from the reference stake.
    return sorted(rows, key=lambda r: (int(r["row"]), int(r["col"]), int(r["plot"])))


# ---- images ----------------------------------------------------------------------------------------------

def read_pgm(path):
    data = path.read_bytes()
    fields = []
    i = 0
    while len(fields) < 4:
        while data[i:i + 1].isspace():
            i += 1
        if data[i:i + 1] == b"#":
            while data[i:i + 1] != b"\n":
                i += 1
            continue
        j = i
        while not data[j:j + 1].isspace():
            j += 1
        fields.append(data[i:j])
        i = j
    i += 1
    if fields[0] != b"P5" or int(fields[3]) != 255:
        fail(f"{path}: not an 8-bit binary PGM")
    w, h = int(fields[1]), int(fields[2])
    return w, h, data[i:i + w * h]


def write_pgm_crop(page, x0, y0, x1, y1, path):
    w, h, pix = page
    x0, y0, x1, y1 = max(0, x0), max(0, y0), min(w, x1), min(h, y1)
    rows = b"".join(pix[y * w + x0:y * w + x1] for y in range(y0, y1))
    path.write_bytes(b"P5\n%d %d\n255\n" % (x1 - x0, y1 - y0) + rows)
    return rows


def zbar_many(files):
    """zbarimg --xml over many images: {file name: [payloads]}. Exit 4 means some image held no symbol."""
    zbarimg = tool("zbarimg", "zbar-tools")
    out = {}
    for start in range(0, len(files), 50):
        batch = files[start:start + 50]
        p = run([zbarimg, "--nodbus", "-q", "--xml"] + batch, expect=None)
        if p.returncode not in (0, 4):
            fail(f"zbarimg exited {p.returncode}: {p.stderr}")
        doc = xml.dom.minidom.parseString(p.stdout)
        for src in doc.getElementsByTagName("source"):
            href = src.getAttribute("href")
            out[href] = [d.firstChild.data if d.firstChild else "" for d in src.getElementsByTagName("data")]
    return {str(f): out.get(str(f), []) for f in files}


def rasterise(pdf, prefix):
    pdftoppm = tool("pdftoppm", "poppler-utils")
    run([pdftoppm, "-r", DPI, "-gray", pdf, prefix])
    pages = sorted(prefix.parent.glob(prefix.name + "-*.pgm"), key=lambda p: int(p.stem.rsplit("-", 1)[1]))
    if not pages:
        fail(f"pdftoppm made no page of {pdf}")
    return pages


def qpdf_check(pdf):
    qpdf = tool("qpdf", "qpdf")
    p = run([qpdf, "--check", pdf], expect=None)
    if p.returncode != 0:
        fail(f"qpdf --check refused {pdf} (exit {p.returncode}):\n{p.stdout}{p.stderr}")


def px(mm):
    return mm / 25.4 * DPI


def check_page_size(page_path, w, h, width_mm, height_mm):
    ew, eh = px(width_mm), px(height_mm)
    if abs(w - ew) > 1.01 or abs(h - eh) > 1.01:
        fail(f"{page_path.name} is {w} x {h} px at {DPI} dpi, expected {ew:.1f} x {eh:.1f} "
             f"({width_mm:.1f} x {height_mm:.1f} mm)")


# ---- cases -----------------------------------------------------------------------------------------------

def decode_sheet_pdf(pdf, g, expected_rows, work, label):
    """Rasterise a label-sheet PDF, cut out every cell of every page, decode each cell alone."""
    qpdf_check(pdf)
    pages = rasterise(pdf, work / label)
    per_page = g["columns"] * g["rows"]
    want_pages = math.ceil(len(expected_rows) / per_page)
    if len(pages) != want_pages:
        fail(f"{label}: {len(pages)} pages for {len(expected_rows)} labels at {per_page} a page, expected {want_pages}")
    cells = []
    for n, page_path in enumerate(pages):
        page = read_pgm(page_path)
        check_page_size(page_path, page[0], page[1], *PAGE_MM[g["page"]])
        for i in range(per_page):
            c, r = i % g["columns"], i // g["columns"]
            x = g["left_mm"] + c * (g["label_width_mm"] + g["gap_x_mm"])
            y = g["top_mm"] + r * (g["label_height_mm"] + g["gap_y_mm"])
            crop = work / f"{label}-p{n + 1}-c{i:03}.pgm"
            pixels = write_pgm_crop(page, round(px(x)), round(px(y)), round(px(x + g["label_width_mm"])),
                                    round(px(y + g["label_height_mm"])), crop)
            cells.append((crop, pixels))
    decoded = zbar_many([c[0] for c in cells])
    found = []
    for k, (crop, pixels) in enumerate(cells):
        got = decoded[str(crop)]
        if k < len(expected_rows):
            want = expected_rows[k]["payload"]
            if got != [want]:
                fail(f"{label}: label {k + 1} ({crop.name}) decodes to {got}, expected [{want!r}]")
            found.extend(got)
        else:
            if got:
                fail(f"{label}: cell {crop.name} after the last label decodes to {got}")
            if min(pixels) < 128:
                fail(f"{label}: cell {crop.name} after the last label is not blank")
    if sorted(found) != sorted(r["payload"] for r in expected_rows) or len(set(found)) != len(found):
        fail(f"{label}: the payloads found are not each plot's exactly once")
    return len(pages)


def case_sheets(pw, work):
    db, code, rows = make_trial(pw, work)
    presets = json.loads(run([pw, "tags", "--list-sheets", "--json"]).stdout)
    if len(presets) < 4 or {p["page"] for p in presets} != {"a4", "letter"}:
        fail(f"expected A4 and Letter sheet presets, got {[p['name'] for p in presets]}")
    for p in presets:
        pdf = work / f"sheet-{p['name']}.pdf"
        out = json.loads(run([pw, "tags", "--db", db, "--format", "pdf", "--sheet", p["name"], "--out", pdf,
                              "--json"]).stdout)
        pages = decode_sheet_pdf(pdf, p, in_order(rows, "walk"), work, p["name"])
        if out["pages"] != pages:
            fail(f"{p['name']}: the command reports {out['pages']} pages, pdftoppm made {pages}")
        print(f"ok: {p['name']}: {len(rows)} labels on {pages} pages, each decoded once by zbarimg in walking order; "
              f"qpdf --check accepts the PDF")

    # A grid given option by option on Letter, in stake order, with ECC H.
    g = {"page": "letter", "label_width_mm": 60.0, "label_height_mm": 40.0, "columns": 3, "rows": 6,
         "top_mm": 15.0, "left_mm": 12.0, "gap_x_mm": 4.0, "gap_y_mm": 2.5}
    pdf = work / "sheet-custom.pdf"
    run([pw, "tags", "--db", db, "--format", "pdf", "--out", pdf, "--order", "stake", "--ecc", "H",
         "--page", "letter", "--label-width", 60, "--label-height", 40, "--columns", 3, "--rows", 6,
         "--top", 15, "--left", 12, "--gap-x", 4, "--gap-y", 2.5])
    pages = decode_sheet_pdf(pdf, g, in_order(rows, "stake"), work, "custom")
    print(f"ok: a Letter grid given by options, ECC H, stake order: {pages} pages, each label decoded once in "
          f"field row then column order")

    # The printed text: pdftotext reads every human code (with its check character) once; the treatment only
    # when asked for.
    pdftotext = tool("pdftotext", "poppler-utils")
    plain = run([pdftotext, "-layout", work / "sheet-a4-3x8.pdf", "-"]).stdout
    for r in rows:
        if plain.count(r["human"]) != 1:
            fail(f"pdftotext finds {r['human']} {plain.count(r['human'])} times in the a4-3x8 sheets")
        if f"Plot {r['plot']}" not in plain:
            fail(f"pdftotext finds no 'Plot {r['plot']}' on the a4-3x8 sheets")
    treatments = sorted({r["treatment"] for r in rows})
    if any(t in plain for t in treatments):
        fail("a treatment is printed without --show-treatment")
    shown = work / "sheet-treatments.pdf"
    run([pw, "tags", "--db", db, "--format", "pdf", "--out", shown, "--show-treatment"])
    qpdf_check(shown)
    plain = run([pdftotext, "-layout", shown, "-"]).stdout
    for t in treatments:
        want = sum(1 for r in rows if r["treatment"] == t)
        if plain.count(t) != want:
            fail(f"--show-treatment: pdftotext finds {t!r} {plain.count(t)} times, expected {want}")
    print(f"ok: pdftotext reads each of the {len(rows)} human codes once, and the treatments only with "
          f"--show-treatment")


def case_roll(pw, work):
    db, code, rows = make_trial(pw, work, blocks=4)
    for size, order, ecc in (("50x25", "walk", "Q"), ("100x50", "stake", "H"), ("40x60", "walk", "M")):
        w, h = (float(v) for v in size.split("x"))
        pdf = work / f"roll-{size}.pdf"
        run([pw, "tags", "--db", db, "--format", "pdf", "--roll", size, "--order", order, "--ecc", ecc,
             "--out", pdf])
        qpdf_check(pdf)
        pages = rasterise(pdf, work / f"roll-{size}")
        want = in_order(rows, order)
        if len(pages) != len(want):
            fail(f"roll {size}: {len(pages)} pages for {len(want)} labels")
        for page_path in pages:
            pw_, ph, _ = read_pgm(page_path)
            check_page_size(page_path, pw_, ph, w, h)
        decoded = zbar_many(pages)
        got = [decoded[str(p)] for p in pages]
        if got != [[r["payload"]] for r in want]:
            bad = next(i for i, (g_, r) in enumerate(zip(got, want)) if g_ != [r["payload"]])
            fail(f"roll {size}: page {bad + 1} decodes to {got[bad]}, expected [{want[bad]['payload']!r}]")
        print(f"ok: roll {size} mm, {order} order, ECC {ecc}: {len(pages)} pages of {w:g} x {h:g} mm, one label "
              f"each, decoded by zbarimg in order; qpdf --check accepts the PDF")


# ---- PNG (W3C PNG specification) -------------------------------------------------------------------------

def read_png(path):
    data = path.read_bytes()
    if data[:8] != b"\x89PNG\r\n\x1a\n":
        fail(f"{path.name}: no PNG signature")
    pos, chunks = 8, []
    while pos < len(data):
        (length,) = struct.unpack(">I", data[pos:pos + 4])
        kind = data[pos + 4:pos + 8]
        body = data[pos + 8:pos + 8 + length]
        (crc,) = struct.unpack(">I", data[pos + 8 + length:pos + 12 + length])
        if zlib.crc32(kind + body) != crc:
            fail(f"{path.name}: CRC of chunk {kind!r} is wrong")
        chunks.append((kind, body))
        pos += 12 + length
    ihdr = chunks[0][1]
    if chunks[0][0] != b"IHDR":
        fail(f"{path.name}: IHDR is not the first chunk")
    w, h, depth, colour, comp, filt, interlace = struct.unpack(">IIBBBBB", ihdr)
    phys = next((b for k, b in chunks if k == b"pHYs"), None)
    raw = zlib.decompress(b"".join(b for k, b in chunks if k == b"IDAT"))
    if depth != 1 or colour != 0 or interlace != 0:
        return {"w": w, "h": h, "depth": depth, "colour": colour, "phys": phys, "dark": None}
    stride = (w + 7) // 8
    prev = bytearray(stride)
    rows = []
    for y in range(h):
        ftype = raw[y * (stride + 1)]
        line = bytearray(raw[y * (stride + 1) + 1:(y + 1) * (stride + 1)])
        for i in range(stride):   # filters with 1 byte per complete pixel (bit depth < 8)
            a = line[i - 1] if i else 0
            b = prev[i]
            c = prev[i - 1] if i else 0
            if ftype == 1:
                line[i] = (line[i] + a) & 255
            elif ftype == 2:
                line[i] = (line[i] + b) & 255
            elif ftype == 3:
                line[i] = (line[i] + (a + b) // 2) & 255
            elif ftype == 4:
                p = a + b - c
                pa, pb, pc = abs(p - a), abs(p - b), abs(p - c)
                line[i] = (line[i] + (a if pa <= pb and pa <= pc else b if pb <= pc else c)) & 255
            elif ftype != 0:
                fail(f"{path.name}: unknown PNG filter {ftype}")
        prev = line
        # Greyscale 1-bit: 0 black, 1 white; leftmost pixel in the high bit.
        rows.append([1 - ((line[x >> 3] >> (7 - (x & 7))) & 1) for x in range(w)])
    return {"w": w, "h": h, "depth": depth, "colour": colour, "phys": phys, "dark": rows}


def finder_rows(dark):
    """Rows crossing a finder pattern's centre: runs dark k, light k, dark 3k, light k, dark k (ISO/IEC 18004)."""
    hits = {}
    for y, row in enumerate(dark):
        runs, x = [], 0
        while x < len(row):
            s = x
            while x < len(row) and row[x] == row[s]:
                x += 1
            runs.append((row[s], s, x - s))
        for i in range(len(runs) - 4):
            (c0, x0, a), (_, _, b), (_, _, c), (_, _, d), (_, _, e) = runs[i:i + 5]
            if c0 == 1 and a == b == d == e and c == 3 * a:
                hits.setdefault((x0, a), []).append(y)
    # A finder's centre stone is 3k rows of the same run pattern: its outer square starts 2k rows above.
    finders = []
    for (x0, k), ys in hits.items():
        ys.sort()
        start = 0
        for i in range(1, len(ys) + 1):
            if i == len(ys) or ys[i] != ys[i - 1] + 1:
                if i - start == 3 * k:
                    finders.append((x0, ys[start] - 2 * k, k))
                start = i
    return finders


def measure_symbol(name, dark):
    """Finds the symbol from its three finder patterns; checks whole-dot modules and the quiet zone.
    Returns (module dots, modules across)."""
    finders = finder_rows(dark)
    for x0, y0, k in finders:
        tr = [f for f in finders if f[1] == y0 and f[2] == k and f[0] > x0]
        bl = [f for f in finders if f[0] == x0 and f[2] == k and f[1] > y0]
        if not tr or not bl:
            continue
        side = tr[0][0] + 7 * k - x0
        if bl[0][1] + 7 * k - y0 != side:
            continue
        if side % k:
            fail(f"{name}: the symbol is {side} dots across, not a whole number of {k}-dot modules")
        n = side // k
        if n < 21 or (n - 17) % 4:
            fail(f"{name}: {n} modules across is no QR version (17 + 4v)")
        h, w = len(dark), len(dark[0])
        # Every module is a uniform k x k block of dots: no resampling, no blur.
        for my in range(n):
            for mx in range(n):
                block = {dark[y0 + my * k + j][x0 + mx * k + i] for j in range(k) for i in range(k)}
                if len(block) != 1:
                    fail(f"{name}: module ({mx}, {my}) of {k} x {k} dots is not all one colour")
        # Quiet zone: 4 light modules on every side, inside the image.
        q = 4 * k
        if x0 - q < 0 or y0 - q < 0 or x0 + side + q > w or y0 + side + q > h:
            fail(f"{name}: the 4-module quiet zone does not fit on the label")
        for y in range(y0 - q, y0 + side + q):
            for x in range(x0 - q, x0 + side + q):
                inside = y0 <= y < y0 + side and x0 <= x < x0 + side
                if not inside and dark[y][x]:
                    fail(f"{name}: dark dot at ({x}, {y}) inside the quiet zone")
        return k, n
    fail(f"{name}: no QR symbol with three finder patterns found on the pixels")


def case_thermal(pw, work):
    db, code, rows = make_trial(pw, work, blocks=2)
    walk = in_order(rows, "walk")
    stake = in_order(rows, "stake")
    setups = [("203-roll50x25", ["--dpi", 203, "--roll", "50x25"], 203, (50.0, 25.0), walk),
              ("300-roll50x25", ["--dpi", 300, "--roll", "50x25"], 300, (50.0, 25.0), walk),
              ("600-roll50x25", ["--dpi", 600, "--roll", "50x25"], 600, (50.0, 25.0), walk),
              ("203-a4-4x10", ["--dpi", 203, "--sheet", "a4-4x10", "--order", "stake"], 203, (48.5, 25.4), stake),
              ("300-roll30x45-H", ["--dpi", 300, "--roll", "30x45", "--ecc", "H"], 300, (30.0, 45.0), walk),
              ("203-roll38x25", ["--dpi", 203, "--roll", "38x25"], 203, (38.0, 25.0), walk)]
    for name, args, dpi, (wmm, hmm), want in setups:
        out = work / name
        listed = run([pw, "tags", "--db", db, "--format", "png", "--out", out] + args).stdout.split()
        files = sorted(out.glob("*.png"))
        if [pathlib.Path(f).name for f in listed] != [f.name for f in files] or len(files) != len(want):
            fail(f"{name}: {len(files)} PNG files for {len(want)} plots, or not listed in print order")
        decoded = zbar_many(files)
        modules = set()
        for f, r in zip(files, want):
            png = read_png(f)
            if png["depth"] != 1 or png["colour"] != 0:
                fail(f"{f.name}: bit depth {png['depth']}, colour type {png['colour']}; expected a 1-bit greyscale PNG")
            # Whole dots of the printer: floor(mm x dpi / 25.4).
            if (png["w"], png["h"]) != (math.floor(wmm * dpi / 25.4), math.floor(hmm * dpi / 25.4)):
                fail(f"{f.name}: {png['w']} x {png['h']} dots for {wmm:g} x {hmm:g} mm at {dpi} dpi")
            if png["phys"] is None:
                fail(f"{f.name}: no pHYs chunk")
            ppx, ppy, unit = struct.unpack(">IIB", png["phys"])
            if unit != 1 or abs(ppx * 0.0254 - dpi) > 0.5 or ppx != ppy:
                fail(f"{f.name}: pHYs {ppx} x {ppy} per unit {unit}, expected {dpi} dpi in pixels per metre")
            k, n = measure_symbol(f.name, png["dark"])
            if k < 1:
                fail(f"{f.name}: module of {k} dots")
            modules.add((k, n))
            if decoded[str(f)] != [r["payload"]]:
                fail(f"{f.name}: zbarimg reads {decoded[str(f)]}, expected [{r['payload']!r}]")
            if f"-{r['plot']}.png" not in f.name:
                fail(f"{f.name}: expected the label of plot {r['plot']} here (print order)")
        print(f"ok: {name}: {len(files)} 1-bit PNGs of {math.floor(wmm * dpi / 25.4)} x {math.floor(hmm * dpi / 25.4)} "
              f"dots with pHYs {dpi} dpi; modules measured {sorted(modules)} (dots, modules across) all whole-dot "
              f"blocks with a clear quiet zone; each decoded by zbarimg in print order")


def case_refusals(pw, work):
    db, code, rows = make_trial(pw, work, blocks=2)
    blind_db, _, _ = make_trial(pw, work, blocks=2, blind=True, name="blind")

    def refused(args, rc, *words):
        p = run([pw, "tags"] + args, expect=rc)
        for w in words:
            if w not in p.stderr:
                fail(f"tags {' '.join(map(str, args))}: the message does not say {w!r}:\n{p.stderr}")
        if p.stdout.strip():
            fail(f"tags {' '.join(map(str, args))}: a refusal printed data on stdout")

    pdf = work / "refused.pdf"
    # 3 x 70 mm from a 5 mm left margin on A4 (210 mm wide, ISO 216): 5 mm over.
    refused(["--db", db, "--format", "pdf", "--out", pdf, "--sheet", "a4-3x8", "--left", 5], 1,
            "--left", "by 5 mm", "210 mm")
    # 6 rows of 45 mm from 12.7 mm on Letter (279.4 mm tall, ANSI Y14.1): 282.7 mm, 3.3 mm over.
    refused(["--db", db, "--format", "pdf", "--out", pdf, "--page", "letter", "--label-width", 100, "--label-height",
             45, "--columns", 2, "--rows", 6, "--top", 12.7], 1, "--label-height", "by 3.3 mm", "279.4 mm")
    refused(["--db", db, "--format", "pdf", "--out", pdf, "--sheet", "a4-3x8", "--label-height", 0], 1,
            "--label-height 0 mm")
    refused(["--db", db, "--format", "pdf", "--out", pdf, "--sheet", "a4-3x8", "--columns", 0], 1, "--columns 0")
    refused(["--db", db, "--format", "pdf", "--out", pdf, "--roll", "50x0"], 1, "--roll")
    refused(["--db", db, "--format", "pdf", "--out", pdf, "--sheet", "no-such-sheet"], 1, "--sheet", "a4-3x8")
    refused(["--db", db, "--format", "png", "--dpi", 203, "--roll", "12x6", "--out", work / "tiny"], 1, "too small")
    refused(["--db", blind_db, "--format", "pdf", "--out", pdf, "--show-treatment"], 1, "blind", "--show-treatment")
    refused(["--db", blind_db, "--format", "svg", "--out", work / "blind-svg", "--show-treatment"], 1, "blind")
    if pdf.exists():
        fail("a refused command left a PDF behind")
    # Command-line misuse: exit 2.
    refused(["--db", db, "--format", "pdf", "--out", pdf, "--dpi", 203], 2, "--dpi")
    refused(["--db", db, "--format", "png", "--dpi", 150, "--roll", "50x25", "--out", work / "x"], 2, "--dpi")
    refused(["--db", db, "--format", "png", "--dpi", 203, "--out", work / "x"], 2, "--roll")
    refused(["--db", db, "--format", "pdf", "--out", pdf, "--roll", "50x25", "--sheet", "a4-3x8"], 2, "--roll")
    refused(["--db", db, "--format", "svg", "--out", work / "x", "--sheet", "a4-3x8"], 2, "--sheet")
    # The blind trial prints fine without the treatment.
    run([pw, "tags", "--db", blind_db, "--format", "pdf", "--out", work / "blind.pdf"])
    qpdf_check(work / "blind.pdf")
    print("ok: overflowing, empty and unknown geometry, a too small thermal label and --show-treatment on a blind "
          "trial are refused (exit 1) naming the option; misuse exits 2")


def main():
    if len(sys.argv) != 4:
        fail("usage: labels_checks.py CASE PLOTWRIGHT WORKDIR")
    case, pw, work = sys.argv[1], pathlib.Path(sys.argv[2]), pathlib.Path(sys.argv[3])
    if work.exists():
        shutil.rmtree(work)
    work.mkdir(parents=True)
    cases = {"sheets": case_sheets, "roll": case_roll, "thermal": case_thermal, "refusals": case_refusals}
    if case not in cases:
        fail(f"unknown case {case}")
    cases[case](pw, work)


if __name__ == "__main__":
    main()
