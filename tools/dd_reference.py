#!/usr/bin/env python3
"""Reference values for the double-double module `double_double.rs`.

Uses only the Python standard library (`decimal`, `math`, `random`).

Every function value is computed with `decimal` at 60 significant digits
(round-half-even).  Test inputs are exactly representable double-double
values: the input is the exact Decimal sum hi + lo (formed with enough
precision that the `Inexact` trap never fires).  Each expected value d is
printed as (expected_hi, expected_lo) with

    expected_hi = float(d)
    expected_lo = float(d - Decimal(expected_hi))

Usage:
    python3 tools/dd_reference.py constants   # constants used by the module
    python3 tools/dd_reference.py tables      # test tables (Rust array literals)
    python3 tools/dd_reference.py             # both
    python3 tools/dd_reference.py check [FILE] # the tables in FILE are the generated ones
"""

import math
import random
import sys
from decimal import Context, Decimal, Inexact, ROUND_HALF_EVEN, localcontext

PREC = 60
CTX = Context(prec=PREC, rounding=ROUND_HALF_EVEN)


def exact(hi, lo=0.0):
    """Exact Decimal value of the double-double hi + lo."""
    with localcontext() as c:
        c.prec = 3000
        c.traps[Inexact] = True
        return Decimal(hi) + Decimal(lo)


def to_dd(d):
    """Split a 60-digit Decimal into (hi, lo) doubles."""
    hi = float(d)
    lo = float(CTX.subtract(d, Decimal(hi)))
    s = float(exact(hi, lo))
    if s != hi:
        # lo was rounded onto a half-ulp tie of hi (round-half-even would
        # move hi): take the rounded sum as hi so the pair is normalized.
        hi = s
        lo = float(CTX.subtract(d, Decimal(hi)))
    check_normalized(hi, lo)
    return hi, lo


def check_normalized(hi, lo):
    """|lo| <= ulp(hi)/2, i.e. hi is the double nearest to hi + lo."""
    if hi == 0.0:
        assert lo == 0.0
        return
    assert float(exact(hi, lo)) == hi, (hi, lo)


def lit(x):
    """Rust f64 literal (shortest round-trip repr)."""
    if x == 0.0:
        return "-0.0" if math.copysign(1.0, x) < 0 else "0.0"
    r = repr(x)
    assert float(r) == x and "inf" not in r and "nan" not in r
    return r


def sig_bits(x):
    """Number of significant bits of a finite double."""
    if x == 0.0:
        return 0
    m, _ = math.frexp(abs(x))
    n = int(m * 2**53)
    while n % 2 == 0:
        n //= 2
    return n.bit_length()


def round_to_bits(d, bits):
    """Decimal d rounded to a double with at most `bits` significant bits."""
    e = math.floor(math.log2(abs(float(d))))
    scale = Decimal(2) ** (bits - 1 - e)
    with localcontext() as c:
        c.prec = 200
        m = (d * scale).to_integral_value()
    x = float(m) * 2.0 ** -(bits - 1 - e)
    assert sig_bits(x) <= bits
    return x


# ---------------------------------------------------------------- constants


def constants():
    out = []
    ln2 = CTX.ln(Decimal(2))
    e = CTX.exp(Decimal(1))
    out.append(f"// ln 2 = {ln2}")
    hi, lo = to_dd(ln2)
    check_normalized(hi, lo)
    assert hi == math.log(2.0)  # == std::f64::consts::LN_2
    out.append(f"LN_2: hi = {lit(hi)} (== std::f64::consts::LN_2), lo = {lit(lo)}")
    out.append(f"// e = {e}")
    hi, lo = to_dd(e)
    check_normalized(hi, lo)
    assert hi == math.e  # == std::f64::consts::E
    out.append(f"E: hi = {lit(hi)} (== std::f64::consts::E), lo = {lit(lo)}")

    # Three-part ln 2 for argument reduction: c0 and c1 carry at most 42
    # significant bits so that k*c0 and k*c1 are exact for |k| < 2^11.
    c0 = round_to_bits(ln2, 42)
    r1 = CTX.subtract(ln2, Decimal(c0))
    c1 = round_to_bits(r1, 42)
    r2 = CTX.subtract(r1, Decimal(c1))
    c2 = float(r2)
    resid = abs(CTX.subtract(r2, Decimal(c2)))
    assert sig_bits(c0) <= 42 and sig_bits(c1) <= 42
    assert resid < Decimal("1e-40"), resid
    out.append(
        f"LN_2 three-part: c0 = {lit(c0)} ({sig_bits(c0)} bits), "
        f"c1 = {lit(c1)} ({sig_bits(c1)} bits), c2 = {lit(c2)}, "
        f"|ln2 - c0 - c1 - c2| = {resid:.3e}"
    )

    out.append("INV_FACT (1/n!, n = 2..=10):")
    for n in range(2, 11):
        d = CTX.divide(Decimal(1), Decimal(math.factorial(n)))
        hi, lo = to_dd(d)
        check_normalized(hi, lo)
        out.append(f"    Dd {{ hi: {lit(hi)}, lo: {lit(lo)} }}, // 1/{n}!")
    return "\n".join(out)


# ---------------------------------------------------------------- tables


RNG = random.Random(20240611)


def with_lo(hi, frac=None):
    """A normalized double-double hi + lo with a pseudo-random lo."""
    if hi == 0.0:
        return 0.0, 0.0
    if frac is None:
        frac = RNG.uniform(-0.49, 0.49)
    lo = math.ulp(hi) * frac
    check_normalized(hi, lo)
    return hi, lo


def rand_dd(e_lo, e_hi, signed=True):
    hi = 10.0 ** RNG.uniform(e_lo, e_hi)
    if signed and RNG.random() < 0.5:
        hi = -hi
    return with_lo(hi)


def row(*vals):
    return "    (" + ", ".join(lit(v) for v in vals) + "),"


ATTRS = [
    "#[rustfmt::skip]",
    "#[allow(clippy::approx_constant)] // reference values such as ln 2, sqrt 2",
]


def unary_table(name, inputs, f):
    lines = ATTRS + [f"const {name}: &[(f64, f64, f64, f64)] = &["]
    for hi, lo in inputs:
        check_normalized(hi, lo)
        ehi, elo = to_dd(f(exact(hi, lo)))
        lines.append(row(hi, lo, ehi, elo))
    lines.append("];")
    return "\n".join(lines)


def binary_table(name, inputs, f):
    lines = ATTRS + [f"const {name}: &[(f64, f64, f64, f64, f64, f64)] = &["]
    for (ahi, alo), (bhi, blo) in inputs:
        check_normalized(ahi, alo)
        check_normalized(bhi, blo)
        ehi, elo = to_dd(f(exact(ahi, alo), exact(bhi, blo)))
        lines.append(row(ahi, alo, bhi, blo, ehi, elo))
    lines.append("];")
    return "\n".join(lines)


def tables():
    ln2_hi, ln2_lo = to_dd(CTX.ln(Decimal(2)))
    out = []

    # exp: arguments across [-700, 700]
    exp_args = [
        (1e-20, 0.0), (-1e-20, 0.0), with_lo(1e-10), with_lo(1e-5),
        with_lo(-1e-5), (1e-3, 0.0), with_lo(0.01), with_lo(0.1),
        with_lo(-0.1), (0.25, 0.0), (0.5, 0.0), (-0.5, 0.0),
        (ln2_hi, ln2_lo), (-ln2_hi, -ln2_lo), with_lo(0.5 * ln2_hi),
        with_lo(-0.5 * ln2_hi), with_lo(1.5 * ln2_hi), (1.0, 0.0),
        (-1.0, 0.0), with_lo(1.75), (2.0, 0.0), with_lo(-3.3),
        with_lo(7.25), (10.0, 0.0), (-10.0, 0.0), with_lo(23.45),
        with_lo(-37.5), (50.0, 0.0), (100.0, 0.0), (-100.0, 0.0),
        with_lo(123.456), with_lo(-234.5), with_lo(333.3), (-500.0, 0.0),
        with_lo(600.125), with_lo(-650.0), (690.0, 0.0), (700.0, 0.0),
        (-700.0, 0.0), with_lo(699.9),
    ]
    out.append("// exp: (x_hi, x_lo, exp_hi, exp_lo)")
    out.append(unary_table("EXP_CASES", exp_args, CTX.exp))

    ln_args = [
        (1e-300, 0.0), with_lo(3.7e-250), (1e-200, 0.0), with_lo(1e-100),
        with_lo(2.5e-50), (1e-10, 0.0), with_lo(1e-5), with_lo(1e-3),
        (0.1, 0.0), (0.25, 0.0), (0.5, 0.0), with_lo(0.7071), with_lo(0.9),
        with_lo(0.99), (1.0 - 1e-6, 0.0), (1.0 - 1e-12, 0.0),
        with_lo(1.0 - 1e-12), (1.0 - 2.0**-53, 0.0), (1.0, 0.0),
        (1.0, 2.0**-60), (1.0, -(2.0**-60)), (1.0 + 2.0**-52, 0.0),
        (1.0 + 1e-12, 0.0), with_lo(1.0 + 1e-12), (1.0 + 1e-6, 0.0),
        with_lo(1.01), with_lo(1.4142), (1.5, 0.0), (2.0, 0.0),
        (math.e, 0.0), with_lo(3.0), with_lo(7.5), (10.0, 0.0),
        with_lo(12345.678), (1e10, 0.0), with_lo(1e20), (1e50, 0.0),
        with_lo(1e100), (1e200, 0.0), (1e300, 0.0), with_lo(1.7e308),
    ]
    out.append("// ln: (x_hi, x_lo, ln_hi, ln_lo)")
    out.append(unary_table("LN_CASES", ln_args, CTX.ln))

    sqrt_args = [
        (2.0, 0.0), (3.0, 0.0), (0.5, 0.0), with_lo(0.1), (1.0, 0.0),
        (1.0, 2.0**-60), (1.0 - 2.0**-53, 0.0), with_lo(10.0), (1e-300, 0.0),
        with_lo(1e-250), with_lo(1e300), (4.0, 0.0), with_lo(1.21),
    ] + [rand_dd(-200, 200, signed=False) for _ in range(12)]
    out.append("// sqrt: (x_hi, x_lo, sqrt_hi, sqrt_lo)")
    out.append(unary_table("SQRT_CASES", sqrt_args, CTX.sqrt))

    div_args = [
        ((1.0, 0.0), (3.0, 0.0)), ((2.0, 0.0), (3.0, 0.0)),
        ((1.0, 0.0), (7.0, 0.0)), ((1.0, 0.0), with_lo(10.0)),
        ((ln2_hi, ln2_lo), (1.0, 2.0**-60)), (with_lo(1e300), with_lo(1e-5)),
        (with_lo(1e-280), (3.0, 0.0)), (with_lo(-5.5), with_lo(0.3)),
    ] + [(rand_dd(-100, 100), rand_dd(-100, 100)) for _ in range(22)]
    out.append("// division: (a_hi, a_lo, b_hi, b_lo, q_hi, q_lo)")
    out.append(binary_table("DIV_CASES", div_args, CTX.divide))

    mul_args = [
        ((1.0, 2.0**-60), (1.0, -(2.0**-60))), ((ln2_hi, ln2_lo), (ln2_hi, ln2_lo)),
        (with_lo(1e150), with_lo(3e149)), (with_lo(1e-140), with_lo(-7e-130)),
    ] + [(rand_dd(-100, 100), rand_dd(-100, 100)) for _ in range(16)]
    out.append("// multiplication: (a_hi, a_lo, b_hi, b_lo, p_hi, p_lo)")
    out.append(binary_table("MUL_CASES", mul_args, CTX.multiply))

    add_args = [
        ((1.0, 2.0**-60), (-1.0, 0.0)), ((ln2_hi, ln2_lo), (-ln2_hi, 0.0)),
        (with_lo(1e20), with_lo(1e-20)), (with_lo(3.0), with_lo(-2.9999999)),
    ]
    for _ in range(8):
        a = rand_dd(-50, 50)
        b_hi = -a[0] * (1.0 + RNG.uniform(-1e-9, 1e-9))
        add_args.append((a, with_lo(b_hi)))
    add_args += [(rand_dd(-50, 50), rand_dd(-50, 50)) for _ in range(8)]
    out.append("// addition: (a_hi, a_lo, b_hi, b_lo, sum_hi, sum_lo)")
    out.append(binary_table("ADD_CASES", add_args, CTX.add))

    pow_args = [
        ((0.8, 0.0), (0.875, 0.0)), ((1.2, 0.0), (-1.5, 0.0)),
        ((3.7, 0.0), (0.3, 0.0)), (with_lo(0.5), (2.5, 0.0)),
        (with_lo(1.0001), (3.5, 0.0)), (with_lo(0.9), (-1.25, 0.0)),
        ((300.0, 0.0), (0.1, 0.0)), (with_lo(2.0), with_lo(10.5)),
        (with_lo(1e-5), (0.333, 0.0)), (with_lo(7.0), (-0.66, 0.0)),
    ]
    out.append("// powf: (x_hi, x_lo, e_hi, e_lo, pow_hi, pow_lo)")
    out.append(binary_table("POWF_CASES", pow_args, CTX.power))
    return "\n".join(out)


def blocks(text):
    """The rows of each `const NAME: ... = &[` ... `];` table in `text`, by name (lines stripped)."""
    out, name = {}, None
    for line in text.splitlines():
        t = line.strip()
        if t.startswith("const ") and t.endswith("= &["):
            name = t.split()[1].rstrip(":")
            out[name] = []
        elif name is not None and t == "];":
            name = None
        elif name is not None and t and not t.startswith("//"):
            out[name].append(t)
    return out


def check(path):
    """Exit 1 unless every generated table in the Rust source at `path` holds exactly the generated
    rows, in order: a row missing, changed or added by hand fails."""
    src = blocks(open(path, encoding="utf-8").read())
    want = blocks(tables())
    bad = []
    for name, rows in want.items():
        got = src.get(name)
        if got is None:
            bad.append(f"table {name} is missing")
        elif got != rows:
            extra = [r for r in got if r not in rows]
            missing = [r for r in rows if r not in got]
            bad.append(f"table {name}: {len(missing)} row(s) missing, {len(extra)} not generated"
                       + (f" (e.g. {extra[0]})" if extra else "") + ("" if extra or missing else " (order)"))
    for b in bad:
        print(f"{path}: {b}", file=sys.stderr)
    if bad:
        sys.exit(1)
    print(f"{path}: all {len(want)} generated tables match ({sum(map(len, want.values()))} rows)")


def main():
    what = sys.argv[1] if len(sys.argv) > 1 else "all"
    if what == "check":
        check(sys.argv[2] if len(sys.argv) > 2 else "crates/fluids/src/double_double.rs")
        return
    print(f"// Generated by tools/dd_reference.py (Python decimal, {PREC} significant digits)")
    if what in ("constants", "all"):
        print(constants())
    if what in ("tables", "all"):
        print(tables())


if __name__ == "__main__":
    main()
