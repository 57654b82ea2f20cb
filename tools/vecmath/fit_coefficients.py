#!/usr/bin/env python3
"""Fits the polynomial coefficients used by vecmath (src/lib.rs).

Method: the Remez exchange algorithm for the best (minimax) polynomial
approximation with a weight, as described by J.-M. Muller, "Elementary
Functions: Algorithms and Implementation", 3rd ed., Birkhaeuser 2016,
section 3.3 (E. Remez, 1934). Arithmetic is mpmath at 320 bits. The
coefficients are then rounded to nearest in the target format (f64 or f32), and the
relative error of the rounded polynomial (exact arithmetic) is measured on a
dense grid and printed. Naive rounding costs a few bits against the best
polynomial with representable coefficients; the degrees are chosen with
enough margin that this does not matter at the final rounding.

Fitted functions (all minimise the *relative* error of the fitted part):
  exp:  Q(r) ~ (e^r - 1 - r) / r^2            on [-R, R], R = 0.3466 (> ln2/2)
  tanh: P(y) ~ (tanh(s) - s) / s^3, s = sqrt(y) on [0, T^2]

Run: .venv/bin/python tools/fit_coefficients.py  (prints Rust constants)
"""

import struct
import sys

import mpmath
from mpmath import mp, mpf

mp.prec = 320


def f_exp(r):
    """(e^r - 1 - r)/r^2, by series near 0 to avoid cancellation."""
    if abs(r) < mpf(2) ** -20:
        # 1/2 + r/6 + r^2/24 + r^3/120 + ...
        s, term, k = mpf(0), mpf(1) / 2, 2
        while abs(term) > mpf(2) ** -400:
            s += term
            k += 1
            term = term * r / k
        return s
    return (mp.expm1(r) - r) / (r * r)


def f_tanh(y):
    """(tanh(s) - s)/s^3 with s = sqrt(y); series near 0."""
    if y < mpf(2) ** -40:
        # tanh s = s - s^3/3 + 2 s^5/15 - 17 s^7/315 + 62 s^9/2835
        return -mpf(1) / 3 + 2 * y / 15 - 17 * y * y / 315 + 62 * y**3 / 2835
    s = mp.sqrt(y)
    return (mp.tanh(s) - s) / (s * s * s)


def round_to(v, fmt):
    if fmt == "f64":
        return mpf(float(v))
    return mpf(struct.unpack("<f", struct.pack("<f", float(v)))[0])


def horner(c, x):
    acc = mpf(0)
    for a in reversed(c):
        acc = acc * x + a
    return acc


def remez(f, a, b, deg, fixed=(), grid=3000, iters=60):
    """Minimax relative approximation of f on [a, b] by
    sum(fixed[i] x^i) + sum_{j>=len(fixed)} c_j x^j, total degree deg.
    Returns (coefficients, max relative error)."""
    k0 = len(fixed)
    m = deg - k0 + 1  # free coefficients
    n = m + 1  # reference points
    xs = [
        (a + b) / 2 - (b - a) / 2 * mp.cos(mp.pi * (2 * i + 1) / (2 * n))
        for i in range(n)
    ]
    pts = [
        (a + b) / 2 - (b - a) / 2 * mp.cos(mp.pi * i / (grid - 1))
        for i in range(grid)
    ]
    fvals = [f(x) for x in pts]
    best = None
    for _ in range(iters):
        A = mp.matrix(n, n)
        rhs = mp.matrix(n, 1)
        for i, x in enumerate(xs):
            fx = f(x)
            for j in range(m):
                A[i, j] = x ** (k0 + j)
            A[i, m] = (-1) ** i * abs(fx)  # relative error weight
            rhs[i] = fx - sum(fixed[t] * x**t for t in range(k0))
        sol = mp.lu_solve(A, rhs)
        coef = list(fixed) + [sol[j] for j in range(m)]
        lev = abs(sol[m])

        def err(x, fx=None):
            fx = f(x) if fx is None else fx
            return (horner(coef, x) - fx) / fx

        es = [err(x, fx) for x, fx in zip(pts, fvals)]
        # local extrema of the error on the grid, refined by golden search
        ext = []
        for i in range(grid):
            left = es[i - 1] if i > 0 else None
            right = es[i + 1] if i < grid - 1 else None
            e = es[i]
            if (left is None or abs(e) >= abs(left)) and (
                right is None or abs(e) >= abs(right)
            ):
                lo = pts[max(i - 1, 0)]
                hi = pts[min(i + 1, grid - 1)]
                sgn = 1 if e > 0 else -1
                g = (mp.sqrt(5) - 1) / 2
                x1, x2 = hi - g * (hi - lo), lo + g * (hi - lo)
                for _ in range(60):
                    if sgn * err(x1) > sgn * err(x2):
                        hi = x2
                    else:
                        lo = x1
                    x1, x2 = hi - g * (hi - lo), lo + g * (hi - lo)
                xm = (lo + hi) / 2
                if sgn * err(xm) < sgn * e:
                    xm = pts[i]
                ext.append((xm, err(xm)))
        # keep alternating signs: in each run of equal sign keep the largest
        alt = []
        for x, e in ext:
            if alt and (alt[-1][1] > 0) == (e > 0):
                if abs(e) > abs(alt[-1][1]):
                    alt[-1] = (x, e)
            else:
                alt.append((x, e))
        while len(alt) > n:
            # drop the smaller end
            if abs(alt[0][1]) < abs(alt[-1][1]):
                alt.pop(0)
            else:
                alt.pop()
        emax = max(abs(e) for _, e in alt)
        best = (coef, emax)
        if len(alt) < n:
            break
        xs = [x for x, _ in alt]
        if emax / lev - 1 < mpf(10) ** -12:
            break
    return best


def fit_rounded(f, a, b, deg, fmt):
    """Minimax coefficients rounded to nearest in `fmt`, with the measured
    maximum relative error of the rounded polynomial."""
    coef, _ = remez(f, a, b, deg)
    fixed = [round_to(c, fmt) for c in coef]
    # measure on a dense grid
    emax = mpf(0)
    N = 20000
    for i in range(N + 1):
        x = a + (b - a) * i / N
        fx = f(x)
        emax = max(emax, abs((horner(fixed, x) - fx) / fx))
    return fixed, emax


def bits(v, fmt):
    if fmt == "f64":
        return "0x%016x" % struct.unpack("<Q", struct.pack("<d", float(v)))[0]
    return "0x%08x" % struct.unpack("<I", struct.pack("<f", float(v)))[0]


def show(name, coef, emax, fmt):
    print(f"// {name}: max relative error of the rounded polynomial "
          f"2^{float(mp.log(emax, 2)):.2f} (measured on 20001 points)")
    ty = fmt
    print(f"const {name}: [{ty}; {len(coef)}] = [")
    for c in coef:
        print(f"    {repr(float(c)) if fmt == 'f64' else repr(struct.unpack('<f', struct.pack('<f', float(c)))[0])}, // {bits(c, fmt)}")
    print("];")


def main():
    which = sys.argv[1:] or ["scan"]
    R = mpf("0.3466")
    if which == ["scan"]:
        for deg in range(6, 13):
            _, e = remez(f_exp, -R, R, deg)
            print("exp deg", deg, "log2 err", float(mp.log(e, 2)))
        for T in ["0.25", "0.3", "0.35", "0.4", "0.45", "0.55"]:
            for deg in range(3, 12):
                _, e = remez(f_tanh, mpf(0), mpf(T) ** 2, deg)
                print("tanh T", T, "deg", deg, "log2 err", float(mp.log(e, 2)))
        return
    for spec in which:
        name, fmt, deg, *rest = spec.split(":")
        deg = int(deg)
        if name == "exp":
            coef, e = fit_rounded(f_exp, -R, R, deg, fmt)
            show(f"EXP_{fmt.upper()}", coef, e, fmt)
        elif name == "tanh":
            T = mpf(rest[0])
            coef, e = fit_rounded(f_tanh, mpf(0), T * T, deg, fmt)
            show(f"TANH_{fmt.upper()}", coef, e, fmt)


if __name__ == "__main__":
    main()
