#!/usr/bin/env bash
# Footprint of the handheld build (docs/handheld.md): the stripped size of the plotwright executable (the
# native one and, when build-aarch64/ holds it, the ARM one) and the peak resident memory of a recording
# session over an invented 2,000-plot trial (500 entries in 4 blocks, two traits), measured by GNU time
# (/usr/bin/time -v, "Maximum resident set size"). The session scans every plot in walking order and
# records both traits (4,000 values, each committed before the next line is read), twice on fresh copies of
# the database: through the line recorder (`record --lines`) and through the full-screen recorder on a
# pseudo-terminal made by script(1) (util-linux), keys typed as a wedge scanner and a technician would,
# F10 at the end.
#
# usage: tests/bench/footprint.sh [BUILD_DIR]     (default: build)
# Not a test: it prints figures; nothing passes or fails.
set -euo pipefail
root=$(cd "$(dirname "${BASH_SOURCE[0]}")/../.." && pwd)
build=${1:-$root/build}
exe=$build/plotwright
[[ -x $exe ]] || { echo "footprint: no executable at $exe (./run build first)" >&2; exit 1; }
[[ -x /usr/bin/time ]] || { echo "footprint: needs GNU time (Debian package time)" >&2; exit 1; }
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT

python3 - "$work/trial.toml" <<'PY'
import sys
lines = ['# INVENTED trial for the footprint measurement: 500 entries x 4 blocks = 2,000 plots.',
         '[trial]', 'code = "FOOT26"', 'title = "Invented footprint trial"', 'site = "Invented site"', 'crop = "wheat"',
         'design = "rcbd"',
         'blocks = 4', 'seed = 20261202', '',
         '[field]', 'plot_length_m = 5.0', 'plot_width_m = 1.5', 'alley_m = 1.0', 'plots_per_row = 50', '',
         '[gradient]', 'bearing_deg = 0', 'label = "invented slope"', '',
         '[[traits]]', 'name = "height_cm"', 'unit = "cm"', 'kind = "number"', 'min = 0', 'max = 400',
         'decimals = 0', '',
         '[[traits]]', 'name = "vigour"', 'unit = "score"', 'kind = "number"', 'min = 1', 'max = 9',
         'decimals = 0', '']
for t in range(1, 501):
    lines += ['[[treatments]]', f'label = "Entry {t}"', '']
open(sys.argv[1], 'w').write('\n'.join(lines))
PY
"$exe" design "$work/trial.toml" --db "$work/trial.db" >/dev/null
"$exe" plots --db "$work/trial.db" --format csv --out "$work/plots.csv"
# The same answers as lines (line recorder) and as keys (full-screen recorder: Enter is CR, F10 is ESC [21~).
python3 - "$work/plots.csv" "$work/session.txt" "$work/keys.txt" <<'PY'
import csv, sys
rows = list(csv.DictReader(open(sys.argv[1], newline='')))
answers = [(r['tag'], str(100 + i % 200), str(1 + i % 9)) for i, r in enumerate(rows)]
open(sys.argv[2], 'w').write(''.join(f"{a}\n{b}\n{c}\n" for a, b, c in answers))
open(sys.argv[3], 'w').write(''.join(f"{a}\r{b}\r{c}\r" for a, b, c in answers) + '\x1b[21~')
PY
cp "$work/trial.db" "$work/screen.db"

/usr/bin/time -v -o "$work/time.txt" "$exe" record --db "$work/trial.db" --lines --device foot-1 \
  --observer bench <"$work/session.txt" >/dev/null
TERM=xterm script -qfec "/usr/bin/time -v -o '$work/time-screen.txt' '$exe' record --db '$work/screen.db' \
  --device foot-2 --observer bench" /dev/null <"$work/keys.txt" >/dev/null 2>&1
field() { awk -F': ' -v k="$2" 'index($0, k) { print $2 }' "$1"; }
recorded=$(sqlite3 "$work/trial.db" 'SELECT count(*) FROM observation')
recorded_screen=$(sqlite3 "$work/screen.db" 'SELECT count(*) FROM observation')
rss_kb=$(field "$work/time.txt" 'Maximum resident set size')
rss_screen_kb=$(field "$work/time-screen.txt" 'Maximum resident set size')
wall=$(field "$work/time.txt" 'Elapsed (wall clock)')

mib() { awk -v n="$1" -v d="$2" 'BEGIN { print n / d }'; }
size_of() { local tmp=$work/stripped; "$1" -o "$tmp" "$2"; stat -c %s "$tmp"; }
native_size=$(size_of strip "$exe")
printf 'plots: 2000   values recorded: %s (line recorder), %s (full screen)   line session wall time: %s\n' \
  "$recorded" "$recorded_screen" "$wall"
printf 'peak RSS, line recorder (x86-64): %s kB (%.1f MiB)\n' "$rss_kb" "$(mib "$rss_kb" 1024)"
printf 'peak RSS, full-screen recorder (x86-64): %s kB (%.1f MiB)\n' "$rss_screen_kb" "$(mib "$rss_screen_kb" 1024)"
printf 'stripped executable, x86-64: %s bytes (%.2f MiB)\n' "$native_size" "$(mib "$native_size" 1048576)"
arm=$root/build-aarch64/plotwright
if [[ -x $arm ]] && command -v aarch64-linux-gnu-strip >/dev/null; then
  arm_size=$(size_of aarch64-linux-gnu-strip "$arm")
  printf 'stripped executable, aarch64: %s bytes (%.2f MiB)\n' "$arm_size" "$(mib "$arm_size" 1048576)"
  printf 'aarch64 shared libraries needed: %s\n' \
    "$(aarch64-linux-gnu-readelf -d "$arm" | awk -F'[][]' '/NEEDED/ {printf "%s ", $2}')"
fi
