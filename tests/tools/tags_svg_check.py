"""SVG plot tags checked with general-purpose tools.

1. Python's xml.dom.minidom (an XML parser with namespace support) must parse every tag and sheet: the root is
   <svg> in the SVG namespace, and the caption text, special characters included, comes back as written.
2. The symbol paths are filled into a grey image (PGM) at 4 pixels per millimetre and read by zbarimg (Debian
   zbar-tools): the decoded payloads must be exactly "PW1:" + the human code printed under each symbol.
   Only the drawing commands the tags use are understood (translate/scale transforms; M, h, v, z paths);
   anything else fails the test rather than being skipped.

Usage: tags_svg_check.py PW_TAG_WRITER ZBARIMG OUTDIR. Exit status 0 only when every check passed.
"""
import os
import re
import shutil
import subprocess
import sys
import xml.dom.minidom

SVG_NS = "http://www.w3.org/2000/svg"
PX_PER_MM = 4


def fail(msg):
    print("FAIL: " + msg, file=sys.stderr)
    sys.exit(1)


def parse_transform(text):
    """Affine (a, d, e, f) for x' = a x + e, y' = d y + f from translate()/scale() lists."""
    a, d, e, f = 1.0, 1.0, 0.0, 0.0
    for name, args in re.findall(r"(\w+)\(([^)]*)\)", text or ""):
        nums = [float(v) for v in re.split(r"[ ,]+", args.strip()) if v]
        if name == "translate":
            tx, ty = nums[0], (nums[1] if len(nums) > 1 else 0.0)
            e, f = e + a * tx, f + d * ty
        elif name == "scale":
            sx, sy = nums[0], (nums[1] if len(nums) > 1 else nums[0])
            a, d = a * sx, d * sy
        else:
            fail("unsupported transform " + name)
    return a, d, e, f


def compose(outer, inner):
    a1, d1, e1, f1 = outer
    a2, d2, e2, f2 = inner
    return a1 * a2, d1 * d2, a1 * e2 + e1, d1 * f2 + f1


def path_rects(d):
    """Axis-aligned rectangles (x0, y0, x1, y1) of a path made of M/h/v/z commands."""
    rects = []
    tokens = re.findall(r"[MhvzHVZmL]|-?\d+(?:\.\d+)?", d)
    i, x, y, pts = 0, 0.0, 0.0, []
    while i < len(tokens):
        t = tokens[i]
        if t == "M":
            x, y = float(tokens[i + 1]), float(tokens[i + 2])
            pts = [(x, y)]
            i += 3
        elif t == "h":
            x += float(tokens[i + 1])
            pts.append((x, y))
            i += 2
        elif t == "v":
            y += float(tokens[i + 1])
            pts.append((x, y))
            i += 2
        elif t == "z":
            xs, ys = [p[0] for p in pts], [p[1] for p in pts]
            if len(pts) != 4:
                fail("path piece is not a rectangle: %r" % pts)
            rects.append((min(xs), min(ys), max(xs), max(ys)))
            i += 1
        else:
            fail("unsupported path command " + t)
    return rects


def walk(node, transform, rects, humans):
    if node.nodeType != node.ELEMENT_NODE:
        return
    tr = compose(transform, parse_transform(node.getAttribute("transform")))
    if node.localName == "path":
        a, dd, e, f = tr
        for x0, y0, x1, y1 in path_rects(node.getAttribute("d")):
            rects.append((a * x0 + e, dd * y0 + f, a * x1 + e, dd * y1 + f))
    if node.localName == "g":
        texts = [t for t in node.childNodes if t.nodeType == t.ELEMENT_NODE and t.localName == "text"]
        if texts:
            humans.append("".join(c.data for c in texts[0].childNodes if c.nodeType == c.TEXT_NODE))
    for child in node.childNodes:
        walk(child, tr, rects, humans)


def rasterise(rects, width_mm, height_mm, path):
    w, h = int(round(width_mm * PX_PER_MM)), int(round(height_mm * PX_PER_MM))
    img = bytearray(b"\xff" * (w * h))
    for x0, y0, x1, y1 in rects:
        for py in range(int(round(y0 * PX_PER_MM)), int(round(y1 * PX_PER_MM))):
            row = py * w
            img[row + int(round(x0 * PX_PER_MM)):row + int(round(x1 * PX_PER_MM))] = \
                b"\x00" * (int(round(x1 * PX_PER_MM)) - int(round(x0 * PX_PER_MM)))
    with open(path, "wb") as out:
        out.write(b"P5\n%d %d\n255\n" % (w, h))
        out.write(bytes(img))


def check_svg(path, zbarimg, caption=None):
    doc = xml.dom.minidom.parse(path)  # raises on a document that is not well-formed
    root = doc.documentElement
    if root.localName != "svg" or root.namespaceURI != SVG_NS:
        fail("%s: root is {%s}%s, expected svg in %s" % (path, root.namespaceURI, root.localName, SVG_NS))
    vb = [float(v) for v in root.getAttribute("viewBox").split()]
    rects, humans = [], []
    walk(root, (1.0, 1.0, 0.0, 0.0), rects, humans)
    if caption is not None:
        texts = ["".join(c.data for c in t.childNodes) for t in root.getElementsByTagNameNS(SVG_NS, "text")]
        if caption not in texts:
            fail("%s: caption %r not found among texts %r" % (path, caption, texts))
    pgm = path + ".pgm"
    rasterise(rects, vb[2], vb[3], pgm)
    res = subprocess.run([zbarimg, "--nodbus", "-q", "--raw", pgm], capture_output=True, text=True)
    decoded = sorted(line for line in res.stdout.splitlines() if line)
    expected = sorted("PW1:" + h for h in humans)
    if res.returncode != 0 or decoded != expected or not expected:
        fail("%s: zbarimg (exit %d) read %r, printed codes %r" % (path, res.returncode, decoded, expected))
    print("ok: %s: %d symbols read back as printed" % (os.path.basename(path), len(decoded)))


def main():
    if len(sys.argv) != 4:
        fail("usage: tags_svg_check.py PW_TAG_WRITER ZBARIMG OUTDIR")
    writer, zbarimg, outdir = sys.argv[1:]
    if shutil.which(zbarimg) is None:
        fail("zbarimg not found (%s): install zbar-tools" % zbarimg)
    os.makedirs(outdir, exist_ok=True)
    caption = "Plot 103 \u00b7 Block 1 & <\"entry\" 'A'>"
    for level in "LMQH":
        out = os.path.join(outdir, "tag-%s.svg" % level)
        subprocess.run([writer, "svg", level, out, "SORG26", "103", caption], check=True)
        check_svg(out, zbarimg, caption)
    sheets = [("Q", "4", "SORG26", "101", "112"), ("H", "3", "ABCDEFGHIJ", "999991", "999999"),
              ("M", "5", "MZ25", "1", "2")]
    for n, (level, cols, trial, first, last) in enumerate(sheets):
        out = os.path.join(outdir, "sheet-%d.svg" % n)
        subprocess.run([writer, "sheet", level, cols, out, trial, first, last], check=True)
        check_svg(out, zbarimg)


if __name__ == "__main__":
    main()
