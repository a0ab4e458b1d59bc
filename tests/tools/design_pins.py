#!/usr/bin/python3
"""Pinned outputs of the design generators, recomputed outside the C++ code.

Guards, not validation: this script re-implements, from the recipes written in core/design/latin.hpp,
split_plot.hpp, augmented.hpp and docs/designs-more.md, what each generator should give for a seed, using
only Python 3 integers. It implements mt19937_64 from its published definition (Matsumoto & Nishimura,
ACM TOMACS 10(1), 1998; 64-bit parameters as in the C++ standard [rand.predef]) and checks it against the
standard's fixed value before printing anything. The unit tests (tests/unit/test_latin.cpp,
test_split_plot.cpp, test_augmented.cpp) hold the printed values. Run: /usr/bin/python3 tests/tools/design_pins.py
"""

MASK = (1 << 64) - 1


class MT19937_64:
    def __init__(self, seed):
        self.mt = [0] * 312
        self.mt[0] = seed & MASK
        for i in range(1, 312):
            self.mt[i] = (6364136223846793005 * (self.mt[i - 1] ^ (self.mt[i - 1] >> 62)) + i) & MASK
        self.i = 312

    def next(self):
        if self.i >= 312:
            for k in range(312):
                y = (self.mt[k] & 0xFFFFFFFF80000000) | (self.mt[(k + 1) % 312] & 0x7FFFFFFF)
                v = self.mt[(k + 156) % 312] ^ (y >> 1)
                if y & 1:
                    v ^= 0xB5026F5AA96619E9
                self.mt[k] = v
            self.i = 0
        x = self.mt[self.i]
        self.i += 1
        x ^= (x >> 29) & 0x5555555555555555
        x ^= (x << 17) & 0x71D67FFFEDA60000
        x ^= (x << 37) & 0xFFF7EEE000000000
        x ^= x >> 43
        return x & MASK

    def below(self, n):  # Lemire 2019, algorithm 5
        m = self.next() * n
        low = m & MASK
        if low < n:
            threshold = (1 << 64) % n
            while low < threshold:
                m = self.next() * n
                low = m & MASK
        return m >> 64

    def shuffle(self, v):  # Durstenfeld's Fisher-Yates, last element down
        for i in range(len(v), 1, -1):
            j = self.below(i)
            v[i - 1], v[j] = v[j], v[i - 1]
        return v


def reduced_squares(t):
    """Reduced squares of order t in lexicographic order of their row-by-row string."""
    out = []
    sq = [[(i + j) if i == 0 or j == 0 else None for j in range(t)] for i in range(t)]
    for k in range(t):
        sq[0][k] = k
        sq[k][0] = k
    cells = [(i, j) for i in range(1, t) for j in range(1, t)]

    def fill(d):
        if d == len(cells):
            out.append([s for row in sq for s in row])
            return
        i, j = cells[d]
        for s in range(t):
            if s in sq[i][:j] or s in [sq[r][j] for r in range(i)]:
                continue
            sq[i][j] = s
            fill(d + 1)
            sq[i][j] = None

    fill(0)
    return out


def latin(t, rng):
    if t <= 6:
        lst = reduced_squares(t)
        start = lst[rng.below(len(lst))]
    else:
        start = [(i + j) % t for i in range(t) for j in range(t)]
    rows = rng.shuffle(list(range(t)))
    cols = rng.shuffle(list(range(t)))
    syms = rng.shuffle(list(range(t)))
    return [[syms[start[rows[i] * t + cols[j]]] for j in range(t)] for i in range(t)]


def split(a, b, blocks, rng):
    out = []
    for _ in range(blocks):
        pa = rng.shuffle(list(range(a)))
        row = []
        for m in range(a):
            pb = rng.shuffle(list(range(b)))
            row += [pa[m] * b + pb[s] for s in range(b)]
        out.append(row)
    return out


def strip(a, b, blocks, rng):
    out = []
    for _ in range(blocks):
        pa = rng.shuffle(list(range(a)))
        pb = rng.shuffle(list(range(b)))
        out.append([[pa[c] * b + pb[r] for c in range(a)] for r in range(b)])
    return out


def augmented(c, n, blocks, rng):
    q, e = divmod(n, blocks)
    entries = rng.shuffle(list(range(c, c + n)))
    out, nxt = [], 0
    for k in range(1, blocks + 1):
        m = q + (1 if k <= e else 0)
        cells = list(range(c)) + entries[nxt:nxt + m]
        nxt += m
        out.append(rng.shuffle(cells))
    return out


if __name__ == "__main__":
    g = MT19937_64(5489)
    for _ in range(9999):
        g.next()
    assert g.next() == 9981545732273789042, "mt19937_64 does not match the C++ standard's fixed value"
    assert [len(reduced_squares(t)) for t in (3, 4, 5)] == [1, 4, 56]
    seed = 20260614
    print("latin t=4:", latin(4, MT19937_64(seed)))
    print("latin t=6:", latin(6, MT19937_64(seed)))
    print("latin t=7:", latin(7, MT19937_64(seed)))
    print("split a=2 b=3 r=2:", split(2, 3, 2, MT19937_64(seed)))
    print("strip a=3 b=2 r=2:", strip(3, 2, 2, MT19937_64(seed)))
    print("augmented c=3 n=5 B=2:", augmented(3, 5, 2, MT19937_64(seed)))
