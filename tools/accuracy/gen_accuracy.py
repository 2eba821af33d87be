#!/usr/bin/env python3
"""Generate tests/data/accuracy/f32_transcendentals.csv.

For each WGSL transcendental built-in (and f32 division) this computes, with
mpmath at 60 significant digits, the exact value of the function at a few
hundred binary32 inputs and its correctly rounded binary32 value (IEEE 754
round to nearest, ties to even, with gradual underflow and overflow to
infinity). tests/eval/accuracy.rs reads the table (no Python at test time)
and checks shadegate's evaluator against the WGSL spec's accuracy bounds.

Inputs are deterministic: a fixed seed per function, function-specific
ranges (the ones the spec bounds, plus the rest of the domain) and edge
values. Re-running the script reproduces the file byte for byte for the same
mpmath version.

Usage: python3 tools/accuracy/gen_accuracy.py [output.csv]
"""

import math
import random
import struct
import sys

import mpmath
from mpmath import mp

mp.dps = 60  # the brief asks for at least 50 digits

OUT = "tests/data/accuracy/f32_transcendentals.csv"
PER_FUNCTION = 256
EXACT_DIGITS = 21  # enough to measure errors far below one f32 ULP


def f32(x):
    """Round a Python float (binary64) to the nearest binary32 value."""
    try:
        return struct.unpack("<f", struct.pack("<f", x))[0]
    except OverflowError:
        return math.copysign(math.inf, x)


def bits(x):
    return struct.unpack("<I", struct.pack("<f", x))[0]


def from_bits(b):
    return struct.unpack("<f", struct.pack("<I", b))[0]


def round_f32(v):
    """Correctly round an mpmath real to binary32 (ties to even)."""
    if mpmath.isnan(v):
        return math.nan
    if mpmath.isinf(v):
        return math.inf if v > 0 else -math.inf
    if v == 0:
        return 0.0
    sign = -1.0 if v < 0 else 1.0
    a = abs(v)
    _, e = mpmath.frexp(a)  # a = m * 2^e, m in [0.5, 1)
    e = max(int(e) - 1, -126)  # binade exponent, clamped at the subnormal range
    q = mpmath.ldexp(mpmath.mpf(1), e - 23)  # spacing of binary32 in that binade
    n = a / q
    r = mpmath.floor(n)
    frac = n - r
    if frac > 0.5 or (frac == 0.5 and int(r) % 2 == 1):
        r += 1
    res = r * q
    if res >= mpmath.ldexp(mpmath.mpf(1), 128):
        return sign * math.inf
    return sign * float(res)


def mpf(x):
    return mpmath.mpf(x)


def real_or_nan(v):
    return v if isinstance(v, mpmath.mpf) else mpmath.nan


def exact(name, a, b):
    """The exact (to 60 digits) value of the function; NaN outside the domain."""
    x, y = mpf(a), (mpf(b) if b is not None else None)
    try:
        if name == "exp":
            return mp.exp(x)
        if name == "exp2":
            return mp.power(2, x)
        if name == "log":
            return real_or_nan(mp.log(x)) if a != 0 else -mp.inf
        if name == "log2":
            return real_or_nan(mp.log(x, 2)) if a != 0 else -mp.inf
        if name == "sin":
            return mp.sin(x)
        if name == "cos":
            return mp.cos(x)
        if name == "tan":
            return mp.tan(x)
        if name == "asin":
            return real_or_nan(mp.asin(x))
        if name == "acos":
            return real_or_nan(mp.acos(x))
        if name == "atan":
            return mp.atan(x)
        if name == "atan2":
            return mp.atan2(x, y)
        if name == "sinh":
            return mp.sinh(x)
        if name == "cosh":
            return mp.cosh(x)
        if name == "tanh":
            return mp.tanh(x)
        if name == "sqrt":
            return real_or_nan(mp.sqrt(x))
        if name == "inverseSqrt":
            return real_or_nan(1 / mp.sqrt(x)) if a != 0 else mp.inf
        if name == "pow":
            return real_or_nan(mp.power(x, y))
        if name == "div":
            return x / y
    except (ValueError, ZeroDivisionError):
        return mpmath.nan
    raise KeyError(name)


def log_uniform(rng, lo_exp, hi_exp):
    return 2.0 ** rng.uniform(lo_exp, hi_exp)


def signed(rng, x):
    return x if rng.random() < 0.5 else -x


SUBNORMALS = [from_bits(1), from_bits(0x7FFFF), from_bits(0x7FFFFF)]
TINY = [1e-30, 1e-10, 2.0 ** -126, 2.0 ** -60]


def inputs(name, rng):
    """(a, b) pairs: edges first, then seeded random draws to PER_FUNCTION."""
    pi = math.pi
    edges, draw = [], None
    if name in ("exp", "exp2"):
        top = 88.72 if name == "exp" else 127.99
        bottom = -103.9 if name == "exp" else -149.5
        edges = [0.0, -0.0, 1.0, -1.0, 0.5, top, -top, 88.7228 if name == "exp" else 128.0,
                 bottom, -87.33 if name == "exp" else -126.0, 89.0 if name == "exp" else 129.0,
                 math.inf, -math.inf] + TINY + SUBNORMALS
        draw = lambda: rng.choice([rng.uniform(-1, 1), rng.uniform(-10, 10), rng.uniform(bottom, top)])
    elif name in ("log", "log2"):
        edges = [1.0, 0.5, 2.0, 0.0, f32(1 + 2 ** -23), f32(1 - 2 ** -24), 3.4028234663852886e38,
                 math.inf, -1.0, math.e, 10.0] + TINY + SUBNORMALS
        draw = lambda: rng.choice([rng.uniform(0.5, 2.0), rng.uniform(0.999, 1.001),
                                   log_uniform(rng, -126, 127.9), log_uniform(rng, -149, -126)])
    elif name in ("sin", "cos"):
        edges = [0.0, -0.0, pi, -pi, pi / 2, -pi / 2, pi / 4, 1.0, 100.0, 1e4, 3e5] + TINY
        draw = lambda: rng.choice([rng.uniform(-pi, pi), rng.uniform(-pi, pi), rng.uniform(-100, 100)])
    elif name == "tan":
        edges = [0.0, -0.0, pi / 4, -pi / 4, 1.0, pi / 2 - 1e-3, 1.5, 3.0, 100.0] + TINY
        draw = lambda: rng.choice([rng.uniform(-pi, pi), rng.uniform(-1.4, 1.4), rng.uniform(-100, 100)])
    elif name in ("asin", "acos"):
        edges = [0.0, -0.0, 1.0, -1.0, 0.5, -0.5, f32(1 - 2 ** -24), f32(-1 + 2 ** -24), 1.5, -2.0] + TINY
        draw = lambda: rng.choice([rng.uniform(-1, 1), signed(rng, 1 - log_uniform(rng, -24, -2))])
    elif name == "atan":
        edges = [0.0, -0.0, 1.0, -1.0, 1e10, -1e10, 3.4028234663852886e38, math.inf, -math.inf] + TINY
        draw = lambda: signed(rng, rng.choice([rng.uniform(0, 4), log_uniform(rng, -40, 60)]))
    elif name == "atan2":
        edges = [(1.0, 1.0), (1.0, -1.0), (-1.0, -1.0), (-1.0, 1.0), (0.0, 1.0), (0.0, -1.0),
                 (1.0, 0.0), (-1.0, 0.0), (1e-30, 1.0), (1.0, 1e-30), (3.0, 4.0), (-5.0, 12.0),
                 (1e30, 1e-30), (2.0 ** -126, 2.0 ** 126)]
        draw = lambda: (signed(rng, log_uniform(rng, -20, 20)), signed(rng, log_uniform(rng, -20, 20)))
    elif name in ("sinh", "cosh"):
        edges = [0.0, -0.0, 1.0, -1.0, 0.5, 10.0, -10.0, 88.0, -88.0, 89.5] + TINY
        draw = lambda: rng.choice([rng.uniform(-1, 1), rng.uniform(-10, 10), rng.uniform(-88, 88)])
    elif name == "tanh":
        edges = [0.0, -0.0, 1.0, -1.0, 0.5, 9.0, -9.0, 20.0, -20.0, 100.0] + TINY
        draw = lambda: rng.choice([rng.uniform(-1, 1), rng.uniform(-10, 10), rng.uniform(-0.01, 0.01)])
    elif name in ("sqrt", "inverseSqrt"):
        edges = [0.0, 1.0, 4.0, 2.0, 0.25, 3.4028234663852886e38, math.inf, -1.0] + TINY + SUBNORMALS
        draw = lambda: rng.choice([rng.uniform(0, 4), log_uniform(rng, -126, 127.9),
                                   float(rng.randrange(1, 4096)) ** 2])
    elif name == "pow":
        edges = [(2.0, 10.0), (4.0, 0.5), (1.0, 7.5), (10.0, -3.0), (0.5, 2.2), (2.2, 1 / 2.2),
                 (0.0, 2.0), (3.0, 0.0), (0.9, 100.0), (1.5, -20.0)]

        def draw():
            while True:
                x = rng.choice([rng.uniform(0, 4), log_uniform(rng, -20, 20)])
                y = rng.choice([rng.uniform(-10, 10), float(rng.randrange(-8, 9)), rng.uniform(-1, 1)])
                if x > 0 and abs(y * math.log2(x)) < 120:
                    return (x, y)
    elif name == "div":
        edges = [(1.0, 3.0), (2.0, 3.0), (1.0, 10.0), (-7.0, 0.1), (1e30, 1e-8), (1e-30, 1e8)]
        draw = lambda: (signed(rng, log_uniform(rng, -60, 60)), signed(rng, log_uniform(rng, -60, 60)))
    else:
        raise KeyError(name)
    out = []
    for e in edges:
        out.append(e if isinstance(e, tuple) else (e, None))
    while len(out) < PER_FUNCTION:
        d = draw()
        out.append(d if isinstance(d, tuple) else (d, None))
    # Round every input to binary32: the table holds f32 arguments.
    return [(f32(a), None if b is None else f32(b)) for a, b in out]


FUNCTIONS = ["exp", "exp2", "log", "log2", "sin", "cos", "tan", "asin", "acos", "atan", "atan2",
             "sinh", "cosh", "tanh", "sqrt", "inverseSqrt", "pow", "div"]


def show_exact(v):
    if mpmath.isnan(v):
        return "nan"
    if mpmath.isinf(v):
        return "inf" if v > 0 else "-inf"
    return mpmath.nstr(v, EXACT_DIGITS, min_fixed=-4, max_fixed=8)


def main():
    out = sys.argv[1] if len(sys.argv) > 1 else OUT
    lines = [
        f"# generated by tools/accuracy/gen_accuracy.py with mpmath {mpmath.__version__} "
        f"at {mp.dps} digits; do not edit by hand",
        "fn,a_bits,b_bits,a,b,rounded_bits,exact",
    ]
    for i, name in enumerate(FUNCTIONS):
        rng = random.Random(1000 + i)
        for a, b in inputs(name, rng):
            v = exact(name, a, b)
            r = round_f32(v)
            lines.append(",".join([
                name,
                f"0x{bits(a):08x}",
                "" if b is None else f"0x{bits(b):08x}",
                repr(a),
                "" if b is None else repr(b),
                "" if math.isnan(r) else f"0x{bits(r):08x}",
                show_exact(v),
            ]))
    with open(out, "w", newline="\n") as fh:
        fh.write("\n".join(lines) + "\n")
    print(f"wrote {len(lines) - 2} rows to {out}")


if __name__ == "__main__":
    main()
