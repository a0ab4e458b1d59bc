#!/usr/bin/python3
"""The pinned layout and digest of tests/unit/test_certificate.cpp, rebuilt outside the C++ code.

Seed 20260614, the invented 5-treatment x 4-block RCBD of that test (plots 1.5 m wide with 0.25 m gaps,
6 m long with 1 m alleys, gradient increasing northward). The shuffles come from mt19937_64 and
Fisher-Yates as tests/tools/design_pins.py implements them from their published definitions; the
geometry is worked by hand from docs/design.md (serpentine walk, block 1 at the south, odd blocks walked
from the stake side); the canonical text is written from docs/certificate.md and hashed with Python's
hashlib (SHA-256). Run: /usr/bin/python3 tests/tools/certificate_pin.py
"""
import hashlib
import pathlib

HERE = pathlib.Path(__file__).resolve().parent
SOURCE = (HERE / "design_pins.py").read_text()
NS = {}
exec(SOURCE.split("def reduced_squares")[0], NS)  # the engine and shuffle only

LABELS = ["Check", "N40", "N80", "N120", "N160"]


def main():
    rng = NS["MT19937_64"](20260614)
    lines = ["plotwright-layout-certificate/1", "design\trcbd", "seed\t20260614",
             "algorithm\tmt19937_64+lemire+fisher-yates/1;design=rcbd/1",
             "columns\tplot\tblock\ttreatment\trow\tcol\tx_mm\ty_mm"]
    pins = []
    for block in range(1, 5):
        order = list(range(5))
        rng.shuffle(order)
        y = 3000 + (block - 1) * 7000           # centre of a 6 m plot, rows 6 m + 1 m alley apart
        for pos in range(1, 6):
            col = pos if block % 2 == 1 else 6 - pos
            x = 750 + (col - 1) * 1750          # 1.5 m plots, 0.25 m gaps
            plot = block * 100 + pos
            label = LABELS[order[pos - 1]]
            pins.append(f'{{{plot}, "{label}"}}')
            lines.append(f"{plot}\t{block}\t{label}\t{block}\t{col}\t{x}\t{y}")
    text = "\n".join(lines) + "\n"
    print("{" + ", ".join(pins) + "}")
    print(hashlib.sha256(text.encode("utf-8")).hexdigest())


if __name__ == "__main__":
    main()
