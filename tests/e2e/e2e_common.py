"""Helpers shared by the end-to-end check scripts of tests/e2e (each is run as `python3 SCRIPT ...`, so this
module is found next to it).

fail(msg)            print FAIL: msg and exit 1 (ctest counts the check as failed)
run(args, ...)       run a command with its output captured; fail unless it exits with `expect` (None: any)
output(args, ...)    run(...) and return its standard output
tool(name, package)  the path of an outside tool, or fail naming the Debian package that provides it
"""
import shutil
import subprocess
import sys

SKIP = 77  # ctest's SKIP_RETURN_CODE in tests/cmake/*.cmake: an outside tool is missing


def fail(msg):
    print("FAIL: " + msg)
    sys.exit(1)


def run(args, expect=0, stdin=None, text=True, **kw):
    """`stdin` is the input fed to the command (str, or bytes with text=False); other keywords (env, timeout,
    ...) go to subprocess.run."""
    p = subprocess.run([str(a) for a in args], input=stdin, capture_output=True, text=text, **kw)
    if expect is not None and p.returncode != expect:
        def tail(s):
            return (s.decode(errors="replace") if isinstance(s, bytes) else s)[-3000:]
        fail(f"{' '.join(map(str, args))} exited {p.returncode}, expected {expect}\n"
             f"stdout:\n{tail(p.stdout)}\nstderr:\n{tail(p.stderr)}")
    return p


def output(args, **kw):
    return run(args, **kw).stdout


def tool(name, package):
    path = shutil.which(name)
    if not path:
        fail(f"{name} (Debian package {package}) is needed for this check")
    return path
