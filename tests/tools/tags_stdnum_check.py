"""Plot-code check characters compared with python-stdnum (Debian python3-stdnum), a general-purpose library
of standard number checks with its own ISO/IEC 7064 MOD 37,36 implementation.

For thousands of codes written by human_code, stdnum must compute the same check character over TRIAL + PLOT
and accept the complete string. Usage: tags_stdnum_check.py PW_TAG_WRITER. Fails when stdnum is missing.
"""
import subprocess
import sys

try:
    from stdnum.iso7064 import mod_37_36
except ImportError:
    print("FAIL: python-stdnum is not installed (Debian package python3-stdnum)", file=sys.stderr)
    sys.exit(1)

RANGES = [("SORG26", 1, 3000), ("AB", 999000, 999999), ("ABCDEFGHIJ", 1, 1000), ("Z9", 100, 400),
          ("0123456789", 12345, 12845), ("WHEAT24", 101, 612), ("MZ25", 20001, 20500)]

writer = sys.argv[1]
checked = 0
for trial, first, last in RANGES:
    out = subprocess.run([writer, "codes", trial, str(first), str(last)], check=True, capture_output=True,
                         text=True).stdout.split()
    if len(out) != last - first + 1:
        print("FAIL: %s: expected %d codes, got %d" % (trial, last - first + 1, len(out)), file=sys.stderr)
        sys.exit(1)
    for plot, code in zip(range(first, last + 1), out):
        expected = "%s-%d-%s" % (trial, plot, mod_37_36.calc_check_digit("%s%d" % (trial, plot)))
        if code != expected or not mod_37_36.is_valid(code.replace("-", "")):
            print("FAIL: plotwright wrote %s, python-stdnum expects %s" % (code, expected), file=sys.stderr)
            sys.exit(1)
        checked += 1
print("ok: %d plot codes agree with python-stdnum" % checked)
