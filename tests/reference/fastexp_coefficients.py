"""Constants of the allocation kernel's fast exp (src/sampler/allocate/fastexp.rs).

e^a = 2^(N/16) * 2^(f/16) with N = round(16 a log2 e), f in [-1/2, 1/2]. Prints
  * the table 2^(j/16), j = 0..15, correctly rounded to double (50-digit decimal
    arithmetic, then Python's correctly rounded float conversion), as bit patterns with
    j << 48 subtracted (the kernel adds N << 48 back: the exponent and j at once);
  * p(f) = 1 + a1 f + ... + a5 f^5, minimising max |p(f) / 2^(f/16) - 1| on [-1/2, 1/2]
    (p(0) = 1 exactly), found by the Remez exchange algorithm in 50-digit decimals.

Standard library only (decimal). Run: python3 tests/reference/fastexp_coefficients.py
Method: Remez exchange for a weighted (relative) minimax polynomial, as in numerical
analysis textbooks (common practice, no source); the resulting error is measured again
against std's exp in tests/allocate_fast.rs.
"""
import math
import struct
import sys
from decimal import Decimal, getcontext

getcontext().prec = 50
DEG = 5
LN2 = Decimal(2).ln()


def target(f):
    """2^(f/16)."""
    return (f * LN2 / 16).exp()


def solve(a, b):
    """Gaussian elimination with partial pivoting, Decimal."""
    n = len(b)
    m = [row[:] + [b[i]] for i, row in enumerate(a)]
    for c in range(n):
        p = max(range(c, n), key=lambda r: abs(m[r][c]))
        m[c], m[p] = m[p], m[c]
        for r in range(c + 1, n):
            q = m[r][c] / m[c][c]
            for k in range(c, n + 1):
                m[r][k] -= q * m[c][k]
    x = [Decimal(0)] * n
    for r in range(n - 1, -1, -1):
        x[r] = (m[r][n] - sum(m[r][k] * x[k] for k in range(r + 1, n))) / m[r][r]
    return x


def rel_err(coef, f):
    p = 1 + sum(c * f ** (i + 1) for i, c in enumerate(coef))
    e = target(f)
    return (p - e) / e


def remez():
    half = Decimal(1) / 2
    # Start from Chebyshev-like points (DEG + 1 of them, 0 excluded: p(0) = 1 is fixed).
    pts = [Decimal(-math.cos(math.pi * (k + 0.5) / (DEG + 1)) / 2) for k in range(DEG + 1)]
    grid = [Decimal(i) / 4000 - half for i in range(4001)]
    coef = None
    for _ in range(12):
        # 1 + sum a_i f^i - E(f) = (-1)^k h E(f) at the reference points.
        a, b = [], []
        for k, f in enumerate(pts):
            e = target(f)
            sg = 1 if f > 0 else -1
            a.append([f ** (i + 1) for i in range(DEG)] + [-((-1) ** k) * sg * e])
            b.append(e - 1)
        sol = solve(a, b)
        coef, h = sol[:DEG], sol[DEG]
        errs = [rel_err(coef, f) for f in grid]
        # The error is f times a smooth function (p(0) = 1 is fixed), so the alternation is
        # of err * sign(f). New reference: the extreme point of each run of one sign.
        runs, cur = [], None
        for f, e in zip(grid, errs):
            e = e if f > 0 else -e
            if e == 0:
                continue
            s = e > 0
            if cur is None or cur[0] != s:
                if cur is not None:
                    runs.append(cur)
                cur = [s, f, e]
            elif abs(e) > abs(cur[2]):
                cur[1], cur[2] = f, e
        runs.append(cur)
        while len(runs) > DEG + 1:
            # Drop the weakest end run.
            if abs(runs[0][2]) < abs(runs[-1][2]):
                runs.pop(0)
            else:
                runs.pop()
        if len(runs) == DEG + 1:
            pts = [r[1] for r in runs]
    worst = max(abs(e) for e in errs)
    return coef, h, worst


def bits(x):
    return struct.unpack("<Q", struct.pack("<d", x))[0]


def main():
    print(f"# python {sys.version.split()[0]}, decimal precision {getcontext().prec}")
    print("table (bits of 2^(j/16) minus j << 48):")
    for j in range(16):
        v = float(Decimal(2) ** (Decimal(j) / 16))
        print(f"    0x{(bits(v) - (j << 48)) & 0xFFFFFFFFFFFFFFFF:016X}, // 2^({j}/16) = {v!r}")
    coef, h, worst = remez()
    print(f"polynomial, levelled error {float(h):.3e}, max on grid {float(worst):.3e}:")
    for i, c in enumerate(coef):
        print(f"    a{i + 1} = {float(c)!r}")


if __name__ == "__main__":
    main()
