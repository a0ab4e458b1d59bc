#!/bin/sh
# Round trip of PNG plot tags through an independent decoder: zbarimg (Debian zbar-tools) must read back
# exactly the payload that render_tag_png encoded, for every payload, level and module size below.
# Usage: tags_zbar_roundtrip.sh PW_TAG_WRITER ZBARIMG OUTDIR. Fails on any mismatch, on an unreadable
# symbol and when zbarimg is missing.
set -u
writer=$1
zbarimg=$2
outdir=$3

if ! command -v "$zbarimg" >/dev/null 2>&1; then
    echo "FAIL: zbarimg not found ($zbarimg): install zbar-tools" >&2
    exit 1
fi
mkdir -p "$outdir" || exit 1

longest=$("$writer" codes ABCDEFGHIJ 999999 999999) || exit 1

failures=0
count=0
check() {  # LEVEL MODULE_PX PAYLOAD
    count=$((count + 1))
    file="$outdir/tag-$count.png"
    if ! "$writer" png "$1" "$2" "$file" "$3"; then
        echo "FAIL: writer refused [$3] at level $1" >&2
        failures=$((failures + 1))
        return
    fi
    decoded=$("$zbarimg" --nodbus -q --raw "$file")
    rc=$?
    if [ $rc -ne 0 ] || [ "$decoded" != "$3" ]; then
        echo "FAIL: level $1, $2 px/module: encoded [$3], zbarimg (exit $rc) read [$decoded]" >&2
        failures=$((failures + 1))
    else
        echo "ok: level $1, $2 px/module: [$3]"
    fi
}

for level in L M Q H; do
    check "$level" 4 "PW1:SORG26-103-V"
    check "$level" 4 "PW1:$longest"
done
check Q 2 "PW1:$("$writer" codes WHEAT24 1 1)"
check Q 8 "PW1:$("$writer" codes MZ25 20417 20417)"
# Capacity boundaries of version 1 at Q (ISO/IEC 18004: 16 alphanumeric, 27 numeric, 11 bytes) and one past.
check Q 4 "AAAAAAAAAAAAAAAA"
check Q 4 "AAAAAAAAAAAAAAAAA"
check Q 4 "123456789012345678901234567"
check Q 4 "plot tag 1x"
# Every character of the QR alphanumeric set (ISO/IEC 18004), in one payload.
check M 4 "0123456789ABCDEFGHIJKLMNOPQRSTUVWXYZ \$%*+-./:"

echo "$count payloads, $failures failures"
[ $failures -eq 0 ] && [ $count -gt 0 ]
