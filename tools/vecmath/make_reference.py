#!/usr/bin/env python3
"""Writes the correctly rounded reference values that vecmath's tests read.

For each of exp, tanh and the logistic function 1/(1 + e^-x) in f64 (the f32
functions are checked at test time against f64 evaluations instead, see
src/network/vecmath.rs), it picks inputs (log-uniform over magnitudes, uniform over the interesting
range, dense around every threshold, plus hand-picked edges), evaluates the
function with mpmath at 256 bits (about 77 significant decimal digits), checks
that 320 bits give the same rounded value, rounds correctly (to nearest, ties
to even, IEEE 754-2019 binary64/binary32 with subnormals and overflow) with
exact integer arithmetic, and writes one line per input:

    <input bits hex> <correctly rounded result bits hex> <residual>

residual = (exact - rounded) / ulp(exact), ulp(y) = 2^(max(e, emin) - p + 1)
for 2^e <= |y| < 2^(e+1) (Muller, "Elementary Functions", 3rd ed. 2016,
section 2.1), printed with 9 decimals, so that a test can measure the error of
a computed value in fractions of an ulp. For a NaN input the result is a NaN
pattern and the residual is "nan"; for an infinite result the residual is 0.

Run from anywhere, with mpmath 1.4.1 installed (pip install mpmath==1.4.1):
    python3 tools/vecmath/make_reference.py [exp_f64 tanh_f64 logistic_f64]
The output goes to tests/data/vecmath/{exp,tanh,logistic}_f64.txt (about
3,000 inputs each, 140 KB). Inputs come from Python's random.Random with
fixed seeds, so the files are reproducible. `--f32` also writes the f32 sets
(not committed: the tests check the f32 functions on a million inputs a run
against f64 evaluations).
"""

import math
import os
import random
import struct
import sys

import mpmath
from mpmath import mp, mpf

PREC = 256
CHECK_PREC = 320

FORMATS = {
    # name: (precision p, emin, emax, total bits)
    "f64": (53, -1022, 1023, 64),
    "f32": (24, -126, 127, 32),
}


def to_bits(v, fmt):
    if fmt == "f64":
        return struct.unpack("<Q", struct.pack("<d", v))[0]
    return struct.unpack("<I", struct.pack("<f", v))[0]


def from_bits(b, fmt):
    if fmt == "f64":
        return struct.unpack("<d", struct.pack("<Q", b))[0]
    return struct.unpack("<f", struct.pack("<I", b))[0]


def as_fmt(v, fmt):
    """Round a Python float (f64) to the format (exact for f64)."""
    return from_bits(to_bits(v, fmt), fmt) if fmt == "f32" else v


def round_correctly(v, fmt):
    """Round the mpf v to nearest-even in fmt. Returns (python float,
    residual (v - rounded)/ulp(v) as mpf)."""
    p, emin, emax, _ = FORMATS[fmt]
    if v == 0:
        return 0.0, mpf(0)
    sign = -1 if v < 0 else 1
    a = abs(v)
    man, exp = a.man, a.exp  # a = man * 2^exp exactly
    e = exp + man.bit_length() - 1  # floor(log2 a)
    q = max(e, emin) - (p - 1)  # exponent of ulp(a)
    if e > emax:
        return sign * math.inf, mpf(0)
    if e < emin - p:  # below half the smallest subnormal: rounds to zero
        return sign * 0.0, sign * (a / mpf(2) ** q)
    if exp >= q:
        m = man << (exp - q)  # exact, no rounding needed
    else:
        sh = q - exp
        m = man >> sh
        rem = man & ((1 << sh) - 1)
        half = 1 << (sh - 1)
        if rem > half or (rem == half and (m & 1)):
            m += 1
    rounded = mpf(m) * mpf(2) ** q  # exact
    residual = (a - rounded) / mpf(2) ** q
    # overflow: the rounded value reaches 2^(emax+1)
    if rounded >= mpf(2) ** (emax + 1):
        return sign * math.inf, mpf(0)
    val = math.ldexp(m, q)  # exact: m < 2^(p+1) and the value is in range
    if fmt == "f32":
        assert as_fmt(val, "f32") == val
    return sign * val, sign * residual


def ref_value(fn, x):
    """Exact-enough value of fn at the float x (as an mpf)."""
    xm = mpf(x)
    if fn == "exp":
        return mp.exp(xm)
    if fn == "tanh":
        return mp.tanh(xm)
    if fn == "logistic":
        # 1/(1+e^-x); for large |x| mpmath keeps the tiny values exactly
        return 1 / (1 + mp.exp(-xm))
    raise ValueError(fn)


def reference(fn, x, fmt):
    if math.isnan(x):
        return x, None
    if math.isinf(x):
        special = {
            ("exp", 1): math.inf, ("exp", -1): 0.0,
            ("tanh", 1): 1.0, ("tanh", -1): -1.0,
            ("logistic", 1): 1.0, ("logistic", -1): 0.0,
        }[(fn, 1 if x > 0 else -1)]
        return special, mpf(0)
    if fn == "tanh" and x == 0:
        return x, mpf(0)  # keeps the sign of zero
    with mp.workprec(PREC):
        v = ref_value(fn, x)
        r1, res1 = round_correctly(v, fmt)
    with mp.workprec(CHECK_PREC):
        v2 = ref_value(fn, x)
        r2, res2 = round_correctly(v2, fmt)
    if r1 != r2 or abs(res1 - res2) > mpf(10) ** -12:
        sys.exit(f"precision check failed for {fn} {fmt} at {x!r}")
    return r1, res1


# ---------------------------------------------------------------------------
# input sets
# ---------------------------------------------------------------------------


def neighbours(x, fmt, k):
    """x and its k neighbouring floats on each side."""
    b = to_bits(x, fmt)
    out = []
    for d in range(-k, k + 1):
        nb = b + d if x >= 0 else b - d
        if nb >= 0:
            out.append(from_bits(nb, fmt))
    return out


def log_uniform(rng, lo_exp, hi_exp, n, fmt):
    out = []
    for _ in range(n):
        v = 2.0 ** rng.uniform(lo_exp, hi_exp)
        v = as_fmt(v, fmt)
        out.append(v if rng.random() < 0.5 else -v)
    return out


def uniform(rng, lo, hi, n, fmt):
    return [as_fmt(rng.uniform(lo, hi), fmt) for _ in range(n)]


def around(rng, centre, width, n, fmt, k=40):
    """k neighbours each side of centre, plus n uniform within +-width."""
    c = as_fmt(centre, fmt)
    return neighbours(c, fmt, k) + uniform(rng, centre - width, centre + width, n, fmt)


def edges(fmt):
    p, emin, emax, _ = FORMATS[fmt]
    tiny = math.ldexp(1.0, emin - p + 1)
    minnorm = math.ldexp(1.0, emin)
    big = math.ldexp(2.0 - math.ldexp(1.0, 1 - p), emax)
    vals = [0.0, -0.0, math.inf, -math.inf, math.nan, -math.nan, tiny, -tiny,
            minnorm, -minnorm, big, -big, 1.0, -1.0, 0.5, -0.5, 2.0, -2.0,
            math.log(2), -math.log(2), 0.3, -0.3, 10.0, -10.0, 20.0, -20.0,
            22.0, 88.0, 89.0, 104.0, -104.0, 700.0, 709.0, 710.0, -708.0,
            -709.0, -745.0, -746.0, 1e-300, -1e-300, 1e-30, -1e-30, 1e-10,
            -1e-10, 1e-5, -1e-5, 37.0, 38.0, 17.0, 18.0, 100.0, -100.0,
            1e10, -1e10, 1e300, -1e300]
    out = []
    for v in vals:
        try:
            out.append(as_fmt(v, fmt))
        except OverflowError:
            pass
    # a NaN with a payload
    out.append(from_bits(0x7FF8000000000123 if fmt == "f64" else 0x7FC00123, fmt))
    return out


def reduction_edges(rng, n, fmt, nmax):
    """(k + 1/2) ln 2 and neighbours: the extremes of the reduced argument."""
    out = []
    for _ in range(n):
        k = rng.randint(-nmax, nmax)
        c = as_fmt((k + 0.5) * math.log(2), fmt)
        out += neighbours(c, fmt, 2)
    return out


def inputs(fn, fmt):
    seed = {"exp": 1, "tanh": 2, "logistic": 3}[fn] * 10 + (64 if fmt == "f64" else 32)
    rng = random.Random(seed)
    f64 = fmt == "f64"
    p, emin, emax, _ = FORMATS[fmt]
    lowest = emin - p + 1  # exponent of the smallest subnormal
    xs = edges(fmt)
    if fn == "exp":
        ovf = 709.782712893384 if f64 else 88.72284
        sub = -708.3964185322641 if f64 else -87.33654
        zero = -745.1332191019412 if f64 else -103.97208
        last = -744.4400719213812 if f64 else -103.27893  # e^x = min subnormal
        top = 710.0 if f64 else 89.0
        bottom = -746.0 if f64 else -104.0
        xs += log_uniform(rng, lowest, 10, 700, fmt)
        xs += log_uniform(rng, -40, math.log2(-bottom), 600, fmt)
        xs += uniform(rng, bottom, top, 600, fmt)
        for c in (ovf, sub, zero, last, top, bottom):
            xs += around(rng, c, 1e-6 * abs(c), 50, fmt)
        xs += reduction_edges(rng, 60, fmt, 1074 if f64 else 149)
    elif fn == "tanh":
        sat = 19.061547465398496 if f64 else 9.010913
        small = 1.8e-8 if f64 else 4.2e-4  # around where tanh x rounds to x
        clamp = 22.0 if f64 else 10.0
        xs += log_uniform(rng, lowest, 10, 700, fmt)
        xs += log_uniform(rng, -30, 5, 600, fmt)
        xs += uniform(rng, -20, 20, 500, fmt)
        for c in (0.3, -0.3, sat, -sat, clamp, small, -small):
            xs += around(rng, c, 1e-3 * abs(c), 50, fmt)
        xs += uniform(rng, 0.25, 1.0, 200, fmt)
    elif fn == "logistic":
        zero = -745.1332191019412 if f64 else -103.97208
        sub = -708.3964185322641 if f64 else -87.33654
        one = 37.42994775023705 if f64 else 17.32868
        clamp = 746.0 if f64 else 104.0
        xs += log_uniform(rng, lowest, 10, 700, fmt)
        xs += log_uniform(rng, -30, math.log2(clamp), 600, fmt)
        xs += uniform(rng, -clamp - 2, one + 3, 500, fmt)
        xs += uniform(rng, -10, 10, 300, fmt)
        for c in (zero, sub, one, -clamp, clamp):
            xs += around(rng, c, 1e-6 * abs(c), 50, fmt)
    return xs


def main():
    root = os.path.normpath(os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", ".."))
    outdir = os.path.join(root, "tests", "data", "vecmath")
    os.makedirs(outdir, exist_ok=True)
    args = sys.argv[1:]
    formats = ("f64", "f32") if "--f32" in args else ("f64",)
    only = [a for a in args if a != "--f32"]
    for fn in ("exp", "tanh", "logistic"):
        for fmt in formats:
            if only and f"{fn}_{fmt}" not in only:
                continue
            xs = inputs(fn, fmt)
            width = 16 if fmt == "f64" else 8
            lines = []
            seen = set()
            for x in xs:
                xb = to_bits(x, fmt)
                if xb in seen:
                    continue
                seen.add(xb)
                y, res = reference(fn, x, fmt)
                if res is None:
                    yb = to_bits(y, fmt)
                    lines.append(f"{xb:0{width}x} {yb:0{width}x} nan")
                else:
                    yb = to_bits(y, fmt)
                    lines.append(f"{xb:0{width}x} {yb:0{width}x} {float(res):.9f}")
            path = os.path.join(outdir, f"{fn}_{fmt}.txt")
            definition = {
                "exp": "e^x",
                "tanh": "tanh x",
                "logistic": "1 / (1 + e^-x)",
            }[fn]
            with open(path, "w") as fh:
                fh.write(
                    f"# vecmath reference values: {definition} in {fmt} ({len(lines)} inputs)\n"
                    f"# made by tools/vecmath/make_reference.py with mpmath {mpmath.__version__}, "
                    f"working precision {PREC} bits (~77 significant digits),\n"
                    f"# each value checked against {CHECK_PREC} bits; rounded to nearest-even "
                    f"(IEEE 754-2019 {'binary64' if fmt == 'f64' else 'binary32'}).\n"
                    f"# columns: input bits, correctly rounded result bits, "
                    f"(exact - rounded) / ulp(exact)\n"
                )
                fh.write("\n".join(lines) + "\n")
            print(f"{path}: {len(lines)} inputs", flush=True)


if __name__ == "__main__":
    main()
