#!/usr/bin/env bash
# Footprint of the handheld build (docs/handheld.md): the stripped size of the plotwright executable (the
# native one and, when build-aarch64/ holds it, the ARM one) and the peak resident memory of a recording
# session over an invented 2,000-plot trial (500 entries in 4 blocks, two traits), measured by GNU time
# (/usr/bin/time -v, "Maximum resident set size"). The session scans every plot in walking order and
# records both traits, about 6,000 lines through the line recorder (`record --lines`), each value
# committed before the next line is read.
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
python3 - "$work/plots.csv" "$work/session.txt" <<'PY'
import csv, sys
rows = list(csv.DictReader(open(sys.argv[1], newline='')))
with open(sys.argv[2], 'w') as out:
    for i, r in enumerate(rows):
        out.write(f"{r['tag']}\n{100 + i % 200}\n{1 + i % 9}\n")
PY

/usr/bin/time -v -o "$work/time.txt" "$exe" record --db "$work/trial.db" --lines --device foot-1 \
  --observer bench <"$work/session.txt" >/dev/null
recorded=$(sqlite3 "$work/trial.db" 'SELECT count(*) FROM observation')
rss_kb=$(awk -F': ' '/Maximum resident set size/ {print $2}' "$work/time.txt")
wall=$(awk -F': ' '/Elapsed \(wall clock\)/ {print $2}' "$work/time.txt")

mib() { awk -v n="$1" -v d="$2" 'BEGIN { print n / d }'; }
size_of() { local tmp=$work/stripped; "$1" -o "$tmp" "$2"; stat -c %s "$tmp"; }
native_size=$(size_of strip "$exe")
printf 'plots: 2000   observations recorded: %s   session wall time: %s\n' "$recorded" "$wall"
printf 'peak RSS of the recording session (x86-64): %s kB (%.1f MiB)\n' "$rss_kb" "$(mib "$rss_kb" 1024)"
printf 'stripped executable, x86-64: %s bytes (%.2f MiB)\n' "$native_size" "$(mib "$native_size" 1048576)"
arm=$root/build-aarch64/plotwright
if [[ -x $arm ]] && command -v aarch64-linux-gnu-strip >/dev/null; then
  arm_size=$(size_of aarch64-linux-gnu-strip "$arm")
  printf 'stripped executable, aarch64: %s bytes (%.2f MiB)\n' "$arm_size" "$(mib "$arm_size" 1048576)"
  printf 'aarch64 shared libraries needed: %s\n' \
    "$(aarch64-linux-gnu-readelf -d "$arm" | awk -F'[][]' '/NEEDED/ {printf "%s ", $2}')"
fi
