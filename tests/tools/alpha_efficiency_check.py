"""Alpha designs checked with NumPy (Debian python3-numpy), a general-purpose linear-algebra reference.

For designs written by pw_alpha_design_writer (equal and unequal block sizes, two to four replicates), NumPy
rebuilds the incidence matrix N from the units, forms C = R - N K^-1 N' (John & Williams 1995, Cyclic and
Computer Generated Designs, ch. 2), takes the eigenvalues of R^-1/2 C R^-1/2 with numpy.linalg.eigvalsh,
drops the trivial zero and compares their harmonic mean with the efficiency factor plotwright reports (both
the generator's own figure and the one recomputed from the assignment), to 1e-9. It also checks that every
replicate holds each entry once (Patterson & Williams 1976) and that E does not exceed the reported bound.
Usage: alpha_efficiency_check.py PW_ALPHA_DESIGN_WRITER. Fails when NumPy is missing.
"""
import json
import subprocess
import sys

try:
    import numpy as np
except ImportError:
    print("FAIL: NumPy is not installed (Debian package python3-numpy)", file=sys.stderr)
    sys.exit(1)

CASES = [(24, 4, 2, 1), (25, 4, 2, 2), (30, 7, 3, 3), (10, 6, 2, 4), (12, 3, 4, 5), (13, 5, 2, 6),
         (48, 6, 3, 7), (50, 8, 3, 8), (36, 6, 4, 9), (7, 2, 3, 10), (64, 8, 2, 11), (100, 10, 3, 12),
         (61, 9, 2, 13)]

args = [sys.argv[1]]
for case in CASES:
    args += [str(x) for x in case]
lines = subprocess.run(args, check=True, capture_output=True, text=True).stdout.splitlines()
if len(lines) != len(CASES):
    print("FAIL: expected %d designs, got %d" % (len(CASES), len(lines)), file=sys.stderr)
    sys.exit(1)

failures = 0
for line in lines:
    d = json.loads(line)
    v, r = d["v"], d["r"]
    units = d["units"]  # [block, rep, incomplete_block, treatment, cell_row, cell_col]
    b = len(d["shapes"])
    n = np.zeros((v, b))
    per_rep = {}
    for block, rep, _, t, _, _ in units:
        n[t, block - 1] += 1
        per_rep.setdefault(rep, []).append(t)
    name = "v=%d k=%d r=%d seed=%d" % (v, d["k"], r, d["seed"])
    if sorted(per_rep) != list(range(1, r + 1)) or any(sorted(ts) != list(range(v)) for ts in per_rep.values()):
        print("FAIL: %s: a replicate does not hold each entry exactly once" % name, file=sys.stderr)
        failures += 1
        continue
    reps = n.sum(axis=1)
    sizes = n.sum(axis=0)
    c = np.diag(reps) - n @ np.diag(1.0 / sizes) @ n.T
    a = np.diag(reps ** -0.5) @ c @ np.diag(reps ** -0.5)
    e = np.sort(np.linalg.eigvalsh(a))[1:]
    e_numpy = len(e) / np.sum(1.0 / e)
    for key in ("E", "E_assignment"):
        if abs(d[key] - e_numpy) > 1e-9:
            print("FAIL: %s: plotwright %s = %.12f, NumPy %.12f" % (name, key, d[key], e_numpy), file=sys.stderr)
            failures += 1
    if e_numpy > d["U"] + 1e-12:
        print("FAIL: %s: E = %.12f exceeds the bound %.12f" % (name, e_numpy, d["U"]), file=sys.stderr)
        failures += 1
    print("%s: E = %.9f (NumPy %.9f), U = %.9f" % (name, d["E"], e_numpy, d["U"]))

sys.exit(1 if failures else 0)
