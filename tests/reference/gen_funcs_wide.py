#!/usr/bin/env python3
"""Reference values for the issue-14 functions over a wide spread of
inputs: small and large magnitudes, every quadrant of complex arguments,
negative reals and the branch cuts, shorts (0) and opens (∞), X/R of 0 and
∞, fault impedances of 0 and large, power factors at ±1 and 0, lines of
zero length and of whole half waves, cascaded two-ports and π/T networks at
their least Q. Computed independently of ohmsheet with mpmath at 100
significant digits from the published formulas named beside each case
(the same sources as gen_funcs.py, which this script extends; its
docstring names them in full). No numpy: the fault check is an mpmath
phase-domain solve, so the output is the same on every machine.

Run from the repository root:

    python3 tests/reference/gen_funcs_wide.py > tests/reference/funcs_wide.json

tests/funcs_reference.rs reads the JSON:
- "cases": each formula must agree to 1e-9 relative to the larger of the
  value and "scale" (a case's "scale" lets an exactly-zero current of a
  fault be checked against the size of the others);
- "opens": each formula must give an infinite value (an open, as
  `1 Ω / 0` is), not NaN and not a finite number;
- "refused": each formula is outside the function's published domain and
  must give an error: NaN located on the argument written in "arg", or an
  infinite value whose error names the parameter "param".

Sources (from memory where marked):
- DLMF §4.28 (hyperbolic functions) and §4.37 (inverses): the defining
  formulas arcsinh z = ln(z + (z² + 1)^½), arccosh z =
  ln(z + (z + 1)^½ (z − 1)^½), arctanh z = ½ ln((1 + z)/(1 − z)) with the
  principal ln and square root (−π < arg ≤ π) (DLMF 4.37.16, 4.37.19,
  4.37.24, section numbers from memory). They are evaluated here as
  written at 100 digits, and off the cuts checked against mpmath's own
  asinh/acosh/atanh (an assertion in this script).
- IEC 60909-0:2016: κ = 1.02 + 0.98·e^(−3R/X), Ik" = c·Un/(√3·|Zk|),
  ip = κ·√2·Ik" (from memory).
- Fortescue 1918 and a phase-domain solve of the three fault constraints
  (the method of gen_funcs.py, here in mpmath).
- IEEE Std 1459-2010: S = P + jQ, Q = P·tan φ; IEEE Std 141: the kvar
  multiplier tan φ1 − tan φ2 (from memory).
- Pozar, Microwave Engineering, ch. 2 and §4.4 (from memory): Γ, VSWR,
  lossless and lossy input impedance, ABCD matrices, cascade as a matrix
  product, Zin = (A·ZL + B)/(C·ZL + D).
- Grainger & Stevenson, Power System Analysis, ch. 6 (from memory): the
  exact long-line equivalent, a line of a whole half wave has A = −1.
- Bowick, RF Circuit Design, ch. 4 (from memory): π and T networks as two
  L-networks through a virtual resistance; at the least Q one L-network's
  Q is zero and its element is an open (shunt) or a short (series).
- ASTM B258: d = 0.005 in · 92^((36 − n)/39) (from memory).
- Rounding: exact decimal arithmetic on the numbers as written (mpmath's
  floor and ceiling of the exact quotient); halves away from zero.
"""
import json
from decimal import Decimal

import mpmath as mp

mp.mp.dps = 100
J = mp.mpc(0, 1)
PI = mp.pi
DEG = PI / 180
A120 = mp.expj(2 * PI / 3)


def M(s):
    """An exact decimal as written in the sheet."""
    return mp.mpf(s)


def polar(m, deg):
    return M(m) * mp.expj(M(deg) * DEG)


# ---------------------------------------------------------------- hyperbolic
# DLMF 4.37: the defining formulas, principal ln and sqrt.


def ln(z):
    z = mp.mpc(z)
    # principal: −π < arg ≤ π; mpmath's arg of a negative real (im +0) is +π
    return mp.log(abs(z)) + J * mp.arg(z)


def sqrt(z):
    z = mp.mpc(z)
    if z == 0:
        return mp.mpc(0)
    return mp.exp(ln(z) / 2)


def asinh_f(z):
    return ln(z + sqrt(z * z + 1))


def acosh_f(z):
    return ln(z + sqrt(z + 1) * sqrt(z - 1))


def atanh_f(z):
    return ln((1 + z) / (1 - z)) / 2


def on_cut(fname, z):
    x, y = mp.re(z), mp.im(z)
    if fname == "asinh":
        return x == 0 and abs(y) > 1
    if fname == "acosh":
        return y == 0 and x < 1
    if fname == "atanh":
        return y == 0 and abs(x) > 1
    return False


FORMULA = {"asinh": asinh_f, "acosh": acosh_f, "atanh": atanh_f}
BUILTIN = {"asinh": mp.asinh, "acosh": mp.acosh, "atanh": mp.atanh,
           "sinh": mp.sinh, "cosh": mp.cosh, "tanh": mp.tanh}


def num_text(d):
    """A decimal as a sheet writes it (plain digits, no exponent)."""
    t = format(d, "f")
    return t


def cplx_text(re_d, im_d):
    """A complex number as a sheet writes it, and its exact value."""
    re, im = M(num_text(re_d)), M(num_text(im_d))
    if im == 0:
        t = num_text(re_d)
        return (f"({t})" if t.startswith("-") else t), mp.mpc(re, 0)
    mag = num_text(abs(im_d))
    if re == 0:
        return (f"j*{mag}" if im > 0 else f"-j*{mag}"), mp.mpc(0, im)
    sign = "-" if im < 0 else "+"
    return f"({num_text(re_d)} {sign} j*{mag})", mp.mpc(re, im)


def hyper_cases():
    out = []
    mags = ["1e-12", "0.001", "0.5", "0.999", "1", "1.001", "3", "40", "1e5", "1e12"]
    dirs = [(1, 0), (-1, 0), (0, 1), (0, -1), (1, 1), (-1, 1), (-1, -1), (1, -1), (1, 3), (-3, -1)]
    seen = set()
    for fname in ["sinh", "cosh", "tanh", "asinh", "acosh", "atanh"]:
        for m in mags:
            for sr, si in dirs:
                txt, z = cplx_text(Decimal(m) * sr, Decimal(m) * si)
                if (fname, txt) in seen:
                    continue
                seen.add((fname, txt))
                if fname in ("sinh", "cosh", "tanh") and abs(mp.re(z)) > 300:
                    continue  # beyond the range of a double for sinh and cosh
                if fname == "atanh" and mp.im(z) == 0 and abs(mp.re(z)) == 1:
                    continue  # the pole: a refused case below
                if fname in FORMULA:
                    want = FORMULA[fname](z)
                    cut = on_cut(fname, z)
                    if not cut:
                        ref = BUILTIN[fname](z)
                        assert abs(ref - want) <= mp.mpf("1e-40") * max(1, abs(want)), (fname, z, ref, want)
                    what = "DLMF 4.37 defining formula, principal ln and sqrt" + (
                        " (on the cut)" if cut else "; equals mpmath's")
                else:
                    want = BUILTIN[fname](z)
                    what = "DLMF 4.28, mpmath"
                out.append((f"{fname}({txt})", want, what))
    # tanh far out on the real axis of a complex argument: the limit ±1
    for txt, z in [("(400 + j*1)", mp.mpc(400, 1)), ("(-400 + j*2)", mp.mpc(-400, 2)),
                   ("(30 - j*0.5)", mp.mpc(30, "-0.5")), ("(-25 + j*0.7)", mp.mpc(-25, "0.7"))]:
        out.append((f"tanh{txt}", mp.tanh(z), "DLMF 4.28: tanh → ±1 as Re z → ±∞ (mpmath)"))
    return out


# ---------------------------------------------------------------- steps

def rnd_half_away(q):
    return mp.sign(q) * mp.floor(abs(q) + mp.mpf("0.5"))


STEP_CASES = []
for x, s, unit in [("412", "50", "kvar"), ("-412", "50", "kvar"), ("-425", "50", "kvar"), ("425", "50", "kvar"),
                   ("0.7", "0.1", "A"), ("0.3", "0.1", "A"), ("1.1", "0.1", "A"), ("-0.7", "0.1", "A"),
                   ("1e-9", "1e-12", "F"), ("7.3e12", "5e11", "W"), ("0", "50", "kvar"), ("150", "50", "kvar")]:
    q = M(x) / M(s)
    k = mp.mpf(10) ** 3 if unit == "kvar" else 1
    STEP_CASES.append((f"round({x} {unit}, {s} {unit})", rnd_half_away(q) * M(s) * k, "nearest step, halves away from zero (exact decimals)"))
    STEP_CASES.append((f"round_up({x} {unit}, {s} {unit})", mp.ceil(q) * M(s) * k, "ceiling: towards +∞ (exact decimals)"))
    STEP_CASES.append((f"round_down({x} {unit}, {s} {unit})", mp.floor(q) * M(s) * k, "floor: towards −∞ (exact decimals)"))

SIZES = "300 kVA, 500 kVA, 750 kVA, 1000 kVA"
STEP_CASES += [
    (f"size_up(500 kVA, {SIZES})", M(500e3), "a size met exactly is that size"),
    (f"size_down(500 kVA, {SIZES})", M(500e3), "a size met exactly is that size"),
    (f"size_up(0 kVA, {SIZES})", M(300e3), "the smallest size"),
    (f"size_down(1000 kVA, {SIZES})", M(1000e3), "the largest size"),
    ("size_up(-5 kvar, -10 kvar, 0 kvar, 10 kvar)", M(0), "negative sizes are real numbers too"),
    ("size_down(-5 kvar, -10 kvar, 0 kvar, 10 kvar)", M(-10e3), "down is towards −∞"),
    ("size_up(0.15, 0.1, 0.15, 0.2)", M("0.15"), "on a size"),
]

# ---------------------------------------------------------------- faults (IEC 60909-0, Fortescue)


def z_of_xr(m, xr):
    if xr == mp.inf:
        return J * m
    return m * mp.expj(mp.atan(xr))


def kappa(xr):
    if xr == mp.inf:
        return M(2)
    if xr == 0:
        return M("1.02")
    return M("1.02") + M("0.98") * mp.exp(-3 / xr)


FAULT_BASIC = [
    ("kappa(0)", kappa(0), "IEC 60909-0: κ = 1.02 at R/X = ∞ (resistive)"),
    ("kappa(1e-3)", kappa(M("1e-3")), "IEC 60909-0: e^(−3000) underflows; κ = 1.02"),
    ("kappa(0.1)", kappa(M("0.1")), "IEC 60909-0"),
    ("kappa(1)", kappa(1), "IEC 60909-0"),
    ("kappa(1000)", kappa(1000), "IEC 60909-0: near 2"),
    ("kappa(1/0)", M(2), "IEC 60909-0: κ = 2 when R = 0"),
    ("z_xr(10 Ω, 0)", mp.mpc(10, 0), "X/R = 0: resistive"),
    ("z_xr(10 Ω, 1/0)", mp.mpc(0, 10), "X/R = ∞: reactive"),
    ("z_xr(10 Ω, 1e-9)", z_of_xr(10, M("1e-9")), "|Z|∠atan(X/R)"),
    ("z_xr(10 Ω, 1e9)", z_of_xr(10, M("1e9")), "|Z|∠atan(X/R)"),
    ("z_xr(0 Ω, 7)", mp.mpc(0), "a short stays a short"),
    ("z_xr(3e-6 Ω, 25)", z_of_xr(M("3e-6"), 25), "a milliohm-scale source"),
    ("z_xr(0.08 pu, 12)", z_of_xr(M("0.08"), 12), "per-unit"),
    ("z_plate(0 %, 7, 415 V, 1.5 MVA)", mp.mpc(0), "z = 0: a short"),
    ("z_plate(4 %, 0, 400 V, 630 kVA)", mp.mpc(M("0.04") * 400**2 / M(630e3)), "X/R = 0: all resistance"),
    ("z_plate(4 %, 1/0, 400 V, 630 kVA)", J * M("0.04") * 400**2 / M(630e3), "X/R = ∞: all reactance"),
    ("z_plate(12 %, 40, 400 kV, 1000 MVA)", z_of_xr(M("0.12") * M(400e3) ** 2 / M(1000e6), 40), "a large unit"),
    ("z_plate(3 %, 1.5, 230 V, 5 kVA)", z_of_xr(M("0.03") * 230**2 / M(5e3), M("1.5")), "a small unit"),
    ("z_src(1e12 VA, 10, 11 kV)", z_of_xr(M(11e3) ** 2 / M("1e12"), 10), "a very stiff source"),
    ("z_src(1 kVA, 10, 11 kV)", z_of_xr(M(11e3) ** 2 / M(1e3), 10), "a very weak source"),
    ("z_src(20 kA, 0, 400 V)", mp.mpc(M(400) / (mp.sqrt(3) * 20e3)), "a current, X/R = 0"),
    ("z_src(20 kA, 1/0, 400 V)", J * M(400) / (mp.sqrt(3) * 20e3), "a current, X/R = ∞"),
    ("z_src(1 VA / 0, 10, 11 kV)", mp.mpc(0), "an infinite bus: a short"),
    ("z_refer(0 Ω, 11 kV, 415 V)", mp.mpc(0), "a short stays a short"),
    ("z_refer((0.2 + j1.1) Ω, 415 V, 11 kV)", mp.mpc("0.2", "1.1") * (M(11000) / 415) ** 2, "Z·(V2/V1)², stepping up"),
    ("z_refer((0.2 + j1.1) Ω, 1, 1e3)", mp.mpc("0.2", "1.1") * M(10) ** 6, "a ratio as turns"),
    ("sc_peak(400 V, 2 mΩ, 1.05).kappa", M("1.02"), "κ of a resistive Zk: 1.02"),
    ("sc_peak(400 V, j2 mΩ, 1.05).kappa", M(2), "κ of a reactive Zk: 2"),
    ("sc_peak(400 V, j2 mΩ, 1.05).ip", 2 * mp.sqrt(2) * M("1.05") * 400 / (mp.sqrt(3) * M("2e-3")), "ip = κ·√2·Ik\""),
    ("sc_peak(33 kV, (0.05 + j1.8) Ω, 1.1).Ik", M("1.1") * 33e3 / (mp.sqrt(3) * abs(mp.mpc("0.05", "1.8"))), "Ik\" = c·Un/(√3·|Zk|)"),
    ("sc_peak(33 kV, (0.05 + j1.8) Ω, 1.1).ip", kappa(M("1.8") / M("0.05")) * mp.sqrt(2) * M("1.1") * 33e3 / (mp.sqrt(3) * abs(mp.mpc("0.05", "1.8"))), "ip = κ·√2·Ik\""),
    ("h_res(250 MVA, 1 kvar)", mp.sqrt(M(250e6) / M(1e3)), "h = √(S_sc/Q_c), a tiny bank"),
    ("h_res(5 MVA, 4.5 Mvar)", mp.sqrt(M(5) / M("4.5")), "h = √(S_sc/Q_c), a large bank"),
]


def fault_solve(kind, vf, z1, z2, z0, zf):
    """Phase-domain solve in mpmath: unknowns Ia, Ib, Ic, Va, Vb, Vc with
    V + Zabc·I = E and the fault's three constraints; returns the record
    a, b, c, zero, pos, neg, ground."""
    a = A120
    A = mp.matrix([[1, 1, 1], [1, a**2, a], [1, a, a**2]])
    Ai = mp.inverse(A)
    zabc = A * mp.diag([z0, z1, z2]) * Ai
    e = [vf, a**2 * vf, a * vf]
    m = mp.zeros(6, 6)
    rhs = mp.zeros(6, 1)
    for r in range(3):
        for c in range(3):
            m[r, c] = zabc[r, c]
        m[r, 3 + r] = 1
        rhs[r] = e[r]
    if kind == "slg":
        m[3, 3], m[3, 0] = 1, -zf
        m[4, 1] = 1
        m[5, 2] = 1
    elif kind == "ll":
        m[3, 0] = 1
        m[4, 1], m[4, 2] = 1, 1
        m[5, 4], m[5, 5], m[5, 1] = 1, -1, -zf
    else:
        m[3, 0] = 1
        m[4, 4], m[4, 5] = 1, -1
        m[5, 4], m[5, 1], m[5, 2] = 1, -zf, -zf
    x = mp.lu_solve(m, rhs)
    i = [x[0], x[1], x[2]]
    s = Ai * mp.matrix(i)
    return [i[0], i[1], i[2], s[0], s[1], s[2], i[0] + i[1] + i[2]]


FIELDS = ["a", "b", "c", "zero", "pos", "neg", "ground"]


def fault_cases(call, vals, what):
    scale = max(abs(v) for v in vals)
    return [(f"{call}.{n}", v, what, scale) for n, v in zip(FIELDS, vals)]


def limit_open_zf(kind, vf, z1, z2, z0):
    """Zf → ∞: the limits written out. SLG: nothing flows; DLG: the
    line-to-line fault; LL through an open: nothing flows."""
    if kind == "dlg":
        return fault_solve("ll", vf, z1, z2, z0, 0)
    return [mp.mpc(0)] * 7


VF = M(415) / mp.sqrt(3)
Z1 = mp.mpc("0.0026", "0.0121")
Z2 = mp.mpc("0.0027", "0.0125")
Z0 = mp.mpc("0.0019", "0.0102")
ZT = "(0.0026 + j0.0121) Ω, (0.0027 + j0.0125) Ω"
ZT0 = "(0.0019 + j0.0102) Ω"
FAULT_CASES = []
for kind, call in [("slg", f"fault_slg(VF, {ZT}, {ZT0}, %s)"), ("ll", f"fault_ll(VF, {ZT}, %s)"),
                   ("dlg", f"fault_dlg(VF, {ZT}, {ZT0}, %s)")]:
    for zf_txt, zf in [("0 Ω", mp.mpc(0)), ("1 µΩ", mp.mpc("1e-6")), ("5 Ω", mp.mpc(5)), ("1e6 Ω", mp.mpc("1e6")),
                       ("j0.02 Ω", mp.mpc(0, "0.02")), ("(0.01 - j0.005) Ω", mp.mpc("0.01", "-0.005"))]:
        FAULT_CASES += fault_cases(call % zf_txt, fault_solve(kind, VF, Z1, Z2, Z0, zf),
                                   f"{kind} through {zf_txt}: phase-domain solve (mpmath)")
    FAULT_CASES += fault_cases(call % "1 Ω / 0", limit_open_zf(kind, VF, Z1, Z2, Z0),
                               f"{kind} through an open: the limit (nothing flows; DLG becomes LL)")
# an open zero-sequence path (an ungrounded source): no ground current
FAULT_CASES += fault_cases(f"fault_slg(VF, {ZT}, 1 Ω / 0, 0 Ω)", [mp.mpc(0)] * 7, "Z0 open: no SLG current")
FAULT_CASES += fault_cases(f"fault_dlg(VF, {ZT}, 1 Ω / 0, 0 Ω)", fault_solve("ll", VF, Z1, Z2, Z0, 0),
                           "Z0 open: DLG is the LL fault")
# a solidly grounded bus with Z0 = 0 and a phasor Vf in another quadrant, per-unit
VFP = polar("1.02", "-150")
FAULT_CASES += fault_cases("fault_slg(1.02 pu ∠ -150°, j0.1 pu, j0.1 pu, 0 pu, 0 pu)",
                           fault_solve("slg", VFP, J / 10, J / 10, mp.mpc(0), mp.mpc(0)), "Z0 = 0, per-unit (mpmath)")
FAULT_CASES += fault_cases("fault_dlg(1.02 pu ∠ -150°, (0.01 + j0.1) pu, (0.01 + j0.12) pu, 0 pu, 0 pu)",
                           fault_solve("dlg", VFP, mp.mpc("0.01", "0.1"), mp.mpc("0.01", "0.12"), mp.mpc(0), mp.mpc(0)),
                           "DLG with Z0 = 0, per-unit (mpmath)")
FAULT_CASES += fault_cases("fault_ll(1.02 pu ∠ -150°, (0.01 + j0.1) pu, (0.01 + j0.12) pu, 0 pu)",
                           fault_solve("ll", VFP, mp.mpc("0.01", "0.1"), mp.mpc("0.01", "0.12"), 0, 0),
                           "LL, per-unit, Vf in the third quadrant (mpmath)")

# ---------------------------------------------------------------- power factor at ±1 and 0 (IEEE 1459, IEEE 141)


def tanphi(pf):
    pf = M(pf)
    t = mp.tan(mp.acos(abs(pf)))
    return t if pf > 0 else -t


PF_CASES = [
    ("s_of_p(75 kW, 1)", M(75e3), "pf 1: Q = 0"),
    ("s_of_p(75 kW, -1)", M(75e3), "pf −1 (leading unity): Q = 0"),
    ("s_of_p(75 kW, 0.001)", 75e3 * (1 + J * tanphi("0.001")), "pf near 0 lagging"),
    ("s_of_p(75 kW, -0.001)", 75e3 * (1 + J * tanphi("-0.001")), "pf near 0 leading"),
    ("s_of_p(-40 kW, 0.9)", -40e3 * (1 + J * tanphi("0.9")), "a source (P < 0)"),
    ("q_pfc(180 kW, 0.72, 1)", 180e3 * tanphi("0.72"), "to unity: the whole Q"),
    ("q_pfc(180 kW, 1, 1)", M(0), "unity to unity: nothing"),
    ("q_pfc(180 kW, -0.9, 0.95)", 180e3 * (tanphi("-0.9") - tanphi("0.95")), "from leading to lagging: negative kvar"),
    ("q_pfc(180 kW, 0.05, 0.95)", 180e3 * (tanphi("0.05") - tanphi("0.95")), "from a very low pf"),
    ("i_line(180 kW, 400 V, 1)", 180e3 / (mp.sqrt(3) * 400), "P = √3·V·I at unity"),
    ("i_line(180 kW, 400 V, -0.8)", 180e3 / (mp.sqrt(3) * 400 * M("0.8")), "leading: |pf|"),
    ("p3(400 V, 50 A, 0)", M(0), "pf 0: no real power"),
    ("p3(400 V, 50 A, -0.85)", mp.sqrt(3) * 400 * 50 * M("0.85"), "leading: |pf|"),
    ("pf(5 Ω)", M(1), "resistive: unity"),
    ("pf(j5 Ω)", M(0), "reactive: 0"),
    ("pf(1e-9 Ω + j5 Ω)", M("1e-9") / abs(mp.mpc("1e-9", 5)), "nearly reactive"),
    ("pf((-800 + j600) VA)", M("0.8"), "a source"),
    ("pf_angle(j5 Ω)", PI / 2, "φ = +90°"),
    ("pf_angle(-j5 Ω)", -PI / 2, "φ = −90°"),
    ("pf_angle(-5 kVA)", M(0), "a source at unity: φ = atan(Q/|P|) = 0"),
]

# ---------------------------------------------------------------- lines and RF (Pozar ch. 2, Grainger & Stevenson ch. 6)


def refl(zl, z0):
    return (zl - z0) / (zl + z0)


def zin_lossless(zl, z0, deg):
    t = mp.tan(M(deg) * DEG)
    return z0 * (zl + J * z0 * t) / (z0 + J * zl * t)


def zin_line(zl, zc, gl):
    t = mp.tanh(gl)
    return zc * (zl + zc * t) / (zc + zl * t)


LINE_CASES = [
    ("refl(0 Ω, 50 Ω)", M(-1), "a short: Γ = −1"),
    ("refl(1 Ω / 0, 50 Ω)", M(1), "an open: Γ = 1"),
    ("refl(50 Ω, 50 Ω)", M(0), "matched: Γ = 0"),
    ("refl(j50 Ω, 50 Ω)", refl(50 * J, 50), "a reactance: |Γ| = 1"),
    ("refl(1e-6 Ω, 50 Ω)", refl(M("1e-6"), 50), "nearly a short"),
    ("refl(1e9 Ω, 50 Ω)", refl(M("1e9"), 50), "nearly an open"),
    ("refl((-20 - j80) Ω, (50 - j5) Ω)", refl(mp.mpc(-20, -80), mp.mpc(50, -5)), "an active load on a lossy reference"),
    ("vswr(0)", M(1), "matched: 1"),
    ("vswr(0.999)", (1 + M("0.999")) / (1 - M("0.999")), "nearly total reflection"),
    ("vswr(-0.5)", M(3), "|Γ| only"),
    ("vswr(j*0.5)", M(3), "|Γ| only"),
    ("return_loss(1e-6)", 120, "−20·log10|Γ|"),
    ("return_loss(-1)", M(0), "a short: 0 dB"),
    ("from_db_p(-300)", M(10) ** -30, "10^(L/10)"),
    ("from_db_v(200)", M(10) ** 10, "10^(L/20)"),
]
for zl_txt, zl in [("(30 + j10) Ω", mp.mpc(30, 10)), ("0 Ω", mp.mpc(0)), ("(80 - j200) Ω", mp.mpc(80, -200))]:
    for deg in ["0", "180", "360", "540", "45", "135", "225", "315", "89.9", "90.1", "-0"]:
        if deg == "-0":
            continue
        if zl == 0 and deg in ("0", "180", "360", "540"):
            LINE_CASES.append((f"zin_lossless({zl_txt}, 50 Ω, {deg}°)", mp.mpc(0), "a short through whole half waves: a short"))
            continue
        if deg in ("0", "180", "360", "540"):
            LINE_CASES.append((f"zin_lossless({zl_txt}, 50 Ω, {deg}°)", zl, "whole half waves give ZL back"))
            continue
        LINE_CASES.append((f"zin_lossless({zl_txt}, 50 Ω, {deg}°)", zin_lossless(zl, 50, deg), "Pozar ch. 2, tan form"))
for deg in ["90", "270", "450"]:
    LINE_CASES.append((f"zin_lossless((30 + j10) Ω, 50 Ω, {deg}°)", 2500 / mp.mpc(30, 10), "odd quarter waves: Z0²/ZL"))
    LINE_CASES.append((f"zin_lossless(1 Ω / 0, 50 Ω, {deg}°)", mp.mpc(0), "an open through odd quarter waves: a short"))
for deg in ["30", "120", "200"]:
    LINE_CASES.append((f"zin_lossless(1 Ω / 0, 75 Ω, {deg}°)", -J * 75 / mp.tan(M(deg) * DEG), "an open stub: −jZ0·cot θ"))
LINE_CASES.append(("zin_lossless(1 Ω / 0, 75 Ω, 1.2 rad)", -J * 75 / mp.tan(M("1.2")), "an open stub, θ in radians"))

# a lossy cable: γ = (0.01 + j0.2)/m, Zc = 52 − j1.5 Ω
GAM = mp.mpc("0.01", "0.2")
ZC = mp.mpc(52, "-1.5")
LOSSY = "(52 - j1.5) Ω, (0.01 + j0.2) / 1 metre"
for zl_txt, zl in [("(30 + j10) Ω", mp.mpc(30, 10)), ("0 Ω", mp.mpc(0)), ("(1e4 - j3e4) Ω", mp.mpc(1e4, -3e4))]:
    for ln_txt, ell in [("0 metre", 0), ("1 mm", M("1e-3")), ("2 metre", 2), ("40 metre", 40), ("5 km", 5000)]:
        want = zl if ell == 0 else zin_line(zl, ZC, GAM * ell)
        if ell == 5000:
            want = ZC  # tanh γℓ = 1 to 100 digits: the line's own Zc
        LINE_CASES.append((f"zin_line({zl_txt}, {LOSSY}, {ln_txt})", want, "Pozar §2.7, tanh form"))
for ln_txt, ell in [("1 mm", M("1e-3")), ("2 metre", 2), ("5 km", 5000)]:
    want = ZC / mp.tanh(GAM * ell) if ell != 5000 else ZC
    LINE_CASES.append((f"zin_line(1 Ω / 0, {LOSSY}, {ln_txt})", want, "an open load: Zc·coth γℓ"))

# per-length constants: lossless, RC (no L), DC-like low frequency
for args, (r, l, g, c, f) in [
    ("0 Ω/m, 0.25 µH/m, 0 S/m, 100 pF/m, 10 MHz", (0, "0.25e-6", 0, "100e-12", "10e6")),
    ("0.1 Ω/m, 0 H/m, 0 S/m, 100 pF/m, 1 kHz", ("0.1", 0, 0, "100e-12", "1e3")),
    ("0.05 Ω/km, 1 mH/km, 1 nS/km, 11 nF/km, 1 Hz", ("0.05e-3", "1e-6", "1e-12", "11e-12", 1)),
    ("3 Ω/m, 0.4 µH/m, 1 mS/m, 60 pF/m, 3 GHz", (3, "0.4e-6", "1e-3", "60e-12", "3e9")),
]:
    w = 2 * PI * M(f)
    z = M(r) + J * w * M(l)
    y = M(g) + J * w * M(c)
    LINE_CASES.append((f"line_rlgc({args}).gamma", sqrt(z * y), "γ = √(zy), principal root (α ≥ 0)"))
    LINE_CASES.append((f"line_rlgc({args}).Zc", sqrt(z / y), "Zc = √(z/y)"))


def exact(z, y, length):
    g, zc = sqrt(z * y), sqrt(z / y)
    gl = g * length
    return {"A": mp.cosh(gl), "B": zc * mp.sinh(gl), "C": mp.sinh(gl) / zc, "D": mp.cosh(gl),
            "Z": zc * mp.sinh(gl), "Y2": mp.tanh(gl / 2) / zc}


# A lossless 50 Hz line whose βℓ is exactly π: β = ω√(lc); with
# l = 1 mH/km, c = 11.1 nF/km, ℓ = π/β.
ZL_PM = J * 2 * PI * 50 * M("1e-6")
YL_PM = J * 2 * PI * 50 * M("11.1e-12")
BETA = mp.im(sqrt(ZL_PM * YL_PM))
HALF_KM = PI / BETA / 1000
HALF = mp.nstr(HALF_KM, 25)
# B = C = 0 there, so they are measured against |Zc| (and 1/|Zc|): βℓ is
# π only to a double's rounding. Y′/2 = tanh(jπ/2)/Zc is a pole (the
# equivalent π of a half-wave line has infinite shunt arms), not tested.
ZC_HALF = abs(sqrt(ZL_PM / YL_PM))
for fld, want in exact(ZL_PM, YL_PM, HALF_KM * 1000).items():
    if fld == "Y2":
        continue
    scale = {"B": ZC_HALF, "Z": ZC_HALF, "C": 1 / ZC_HALF}.get(fld, 1)
    LINE_CASES.append((f"line_pi_exact(j*2*pi*50 / 1 s * 1 mH/km, j*2*pi*50 / 1 s * 11.1 nF/km, {HALF} km).{fld}", want,
                       "a whole half wave: A = D = −1, B = C = 0 (Grainger & Stevenson ch. 6)", scale))
for fld, want in exact(mp.mpc("0.03e-3", "0.35e-3"), mp.mpc(0, "3.3e-9"), 0).items():
    LINE_CASES.append((f"line_pi_exact((0.03 + j0.35) Ω/km, j3.3 µS/km, 0 km).{fld}", want, "zero length: the identity"))
for fld, want in exact(mp.mpc("0.03e-3", "0.35e-3"), mp.mpc(0, "3.3e-9"), M(1)).items():
    LINE_CASES.append((f"line_pi_exact((0.03 + j0.35) Ω/km, j3.3 µS/km, 1 metre).{fld}", want, "a very short line"))
for fld, want in exact(mp.mpc("0.03e-3", "0.35e-3"), mp.mpc(0, "3.3e-9"), M(2000e3)).items():
    LINE_CASES.append((f"line_pi_exact((0.03 + j0.35) Ω/km, j3.3 µS/km, 2000 km).{fld}", want, "a very long line"))

# ---------------------------------------------------------------- two-ports (Pozar §4.4)


def m_series(z):
    return mp.matrix([[1, z], [0, 1]])


def m_shunt(y):
    return mp.matrix([[1, 0], [y, 1]])


def m_line(zc, gl):
    return mp.matrix([[mp.cosh(gl), zc * mp.sinh(gl)], [mp.sinh(gl) / zc, mp.cosh(gl)]])


def m_xfmr(n):
    return mp.matrix([[n, 0], [0, 1 / mp.conj(n)]])


def zin(t, zl):
    if zl == mp.inf:
        return t[0, 0] / t[1, 0]
    return (t[0, 0] * zl + t[0, 1]) / (t[1, 0] * zl + t[1, 1])


TWO_CASES = []
CAS = [
    ("abcd_series(1e-3 Ω)", m_series(M("1e-3"))),
    ("abcd_shunt(1e6 Ω)", m_shunt(1 / M("1e6"))),
    ("abcd_line((60 - j4) Ω, (0.002 + j0.35) / 1 metre, 0 metre)", m_line(mp.mpc(60, -4), 0)),
    ("abcd_xfmr(0.1 ∠ -30°)", m_xfmr(polar("0.1", "-30"))),
    ("abcd_series((5 - j300) Ω)", m_series(mp.mpc(5, -300))),
    ("abcd_shunt(-j2 mS)", m_shunt(mp.mpc(0, "-2e-3"))),
    ("abcd_line(50 Ω, j*pi / 1 metre, 1 metre)", m_line(mp.mpc(50), J * PI)),
]
for k in range(2, len(CAS) + 1):
    f = "cascade(" + ", ".join(c[0] for c in CAS[:k]) + ")"
    t = CAS[0][1]
    for c in CAS[1:k]:
        t = t * c[1]
    for fld, (r, c) in zip("ABCD", [(0, 0), (0, 1), (1, 0), (1, 1)]):
        if t[r, c] != 0:
            TWO_CASES.append((f"{f}.{fld}", t[r, c], f"cascade of {k}: the matrix product (mpmath)"))
    for zl_txt, zl in [("0 Ω", mp.mpc(0)), ("1 Ω / 0", mp.inf), ("(75 - j20) Ω", mp.mpc(75, -20))]:
        TWO_CASES.append((f"abcd_zin({f}, {zl_txt})", zin(t, zl), "Zin = (A·ZL + B)/(C·ZL + D)"))
TFULL = "cascade(" + ", ".join(c[0] for c in CAS) + ")"
tf = CAS[0][1]
for c in CAS[1:]:
    tf = tf * c[1]
snd = tf * mp.matrix([polar(11, -20), polar("0.3", "-45")])
TWO_CASES.append((f"abcd_send({TFULL}, 11 V ∠ -20°, 0.3 A ∠ -45°).V", snd[0], "V1 = A·V2 + B·I2"))
TWO_CASES.append((f"abcd_send({TFULL}, 11 V ∠ -20°, 0.3 A ∠ -45°).I", snd[1], "I1 = C·V2 + D·I2"))
snd0 = tf * mp.matrix([polar(11, -20), 0])
TWO_CASES.append((f"abcd_send({TFULL}, 11 V ∠ -20°, 0 A).V", snd0[0], "an open receiving end: V1 = A·V2"))
TWO_CASES.append(("abcd_zin(abcd_line(50 Ω, j*pi / 1 metre, 1 metre), (30 + j10) Ω)", mp.mpc(30, 10),
                  "a half-wave line gives the load back"))

# ---------------------------------------------------------------- π and T at the Q limits (Bowick ch. 4)


def pi_t(rs, rl, q, w, kind):
    rs, rl, q = M(rs), M(rl), mp.mpf(q)
    hi, lo = max(rs, rl), min(rs, rl)
    if kind.startswith("pi"):
        rv = hi / (q**2 + 1)
        qs, ql = mp.sqrt(max(0, rs / rv - 1)), mp.sqrt(max(0, rl / rv - 1))
        x = [rs / qs if qs else mp.inf, rv * (qs + ql), rl / ql if ql else mp.inf]  # shunt, series, shunt
    else:
        rv = lo * (q**2 + 1)
        qs, ql = mp.sqrt(max(0, rv / rs - 1)), mp.sqrt(max(0, rv / rl - 1))
        x = [qs * rs, rv / (qs + ql), ql * rl]  # series, shunt, series
    caps = {"pi_lp": [1, 0, 1], "pi_hp": [0, 1, 0], "t_lp": [0, 1, 0], "t_hp": [1, 0, 1]}[kind]
    el = []
    for xi, c in zip(x, caps):
        if xi == mp.inf:
            el.append(mp.mpf(0) if c else mp.inf)  # an open shunt: C = 0 F (an L would be ∞)
        elif xi == 0:
            el.append(mp.inf if c else mp.mpf(0))  # a short series element: L = 0 H
        else:
            el.append(1 / (w * xi) if c else xi / w)
    return el, rv


MATCH_CASES = []
MATCH_OPENS = []
NAMES = {"pi_lp": ("pimatch_lp", ["C1", "L", "C2"]), "pi_hp": ("pimatch_hp", ["L1", "C", "L2"]),
         "t_lp": ("tmatch_lp", ["L1", "C", "L2"]), "t_hp": ("tmatch_hp", ["C1", "L", "C2"])}
W10 = 2 * PI * M(10e6)
for kind, (fn, flds) in NAMES.items():
    for rs, rl in [("50", "1000"), ("1000", "50"), ("50", "50"), ("50", "50.5"), ("0.5", "5000")]:
        qm = mp.sqrt(max(M(rs), M(rl)) / min(M(rs), M(rl)) - 1)
        for qtxt, qv in [("sqrt(%s/%s - 1)" % (max(rs, rl, key=M), min(rs, rl, key=M)), qm),
                         ("1.001 * sqrt(%s/%s - 1)" % (max(rs, rl, key=M), min(rs, rl, key=M)), qm * M("1.001")),
                         ("500", M(500))]:
            if qv == 0:
                continue
            el, rv = pi_t(rs, rl, qv, W10, kind)
            call = f"{fn}({rs} Ω, {rl} Ω, {qtxt}, 10 MHz)"
            for n, v in zip(flds, el):
                if v == mp.inf:
                    MATCH_OPENS.append((f"{call}.{n}", "at the least Q: an element of infinite value (an L in an open shunt)"))
                else:
                    MATCH_CASES.append((f"{call}.{n}", v, "Bowick ch. 4, two L-networks through Rv" + (" (least Q)" if qv == qm else "")))
            MATCH_CASES.append((f"{call}.Rv", rv, "Rv = Rhi/(Q² + 1) (π) or Rlo·(Q² + 1) (T)"))

# ---------------------------------------------------------------- AWG (ASTM B258)
INCH = M("0.0254")


def awg_d(n):
    return M("0.005") * INCH * mp.power(92, mp.mpf(36 - n) / 39)


AWG_CASES = [(f"awg({n}).d", awg_d(n), "ASTM B258") for n in [-3, -1, 0, 1, 14, 40, 50]]
AWG_CASES += [(f"awg({n}).A", PI / 4 * awg_d(n) ** 2, "ASTM B258, π·d²/4") for n in [-3, 22]]

# ---------------------------------------------------------------- opens and refusals

OPENS = [
    ("zin_lossless(0 Ω, 50 Ω, 90°)", "a shorted quarter wave: an open"),
    ("zin_lossless(0 Ω, 50 Ω, 270°)", "a shorted three-quarter wave: an open"),
    ("zin_lossless(1 Ω / 0, 50 Ω, 180°)", "an open through a half wave: an open"),
    ("zin_lossless(1 Ω / 0, 50 Ω, 0°)", "an open through no line: an open"),
    ("zin_line(1 Ω / 0, (52 - j1.5) Ω, (0.01 + j0.2) / 1 metre, 0 metre)", "zero length keeps an open"),
    ("z_src(0 VA, 10, 11 kV)", "no source: an open"),
    ("z_refer(1 Ω / 0, 11 kV, 415 V)", "an open stays an open"),
    ("z_plate(6 %, 7, 415 V, 0 VA)", "a rating of 0 VA: |Z| = z·V²/S → ∞, an open (with a warning naming S)"),
    ("abcd_zin(abcd_series(1 Ω), 1 Ω / 0)", "a series element before an open: an open"),
    ("refl(1 Ω / 0, 50 Ω) * 0 Ω + 1 Ω / 0", "an open written out"),
] + MATCH_OPENS

# (formula, the argument as written that the error must point at, its
# parameter name ("" when the whole call is at fault), why)
REFUSED = [
    ("atanh(1)", "1", "x", "DLMF 4.37: a pole at ±1"),
    ("atanh(-1)", "-1", "x", "DLMF 4.37: a pole at ±1"),
    ("s_of_p(75 kW, 1.2)", "1.2", "pf", "IEEE 1459: |pf| ≤ 1"),
    ("s_of_p(75 kW, 0)", "0", "pf", "pf 0 with P ≠ 0: Q = P·tan 90° has no finite value"),
    ("q_pfc(180 kW, 0, 0.95)", "0", "pf1", "pf 0 with P ≠ 0: tan 90° has no finite value"),
    ("q_pfc(180 kW, 0.9, -1.01)", "-1.01", "pf2", "IEEE 141: |pf| ≤ 1"),
    ("i_line(180 kW, 400 V, 0)", "0", "pf", "pf 0 with P ≠ 0: no finite current"),
    ("kappa(-2)", "-2", "XR", "IEC 60909-0: X/R ≥ 0"),
    ("z_xr(10 Ω, -0.5)", "-0.5", "XR", "X/R ≥ 0"),
    ("z_xr(-10 Ω, 3)", "-10 Ω", "Zmag", "a magnitude is ≥ 0"),
    ("sc_peak(400 V, (-1 + j2) mΩ, 1.05)", "(-1 + j2) mΩ", "Zk", "R ≥ 0"),
    ("sc_peak(400 V, j2 mΩ, 0)", "0", "c", "c > 0"),
    ("zin_lossless(50 Ω, 50 Ω, -10°)", "-10°", "theta", "a negative electrical length"),
    ("zin_line(50 Ω, 50 Ω, j1 / 1 km, -3 km)", "-3 km", "len", "a negative length"),
    ("line_pi_exact((0.03 + j0.35) Ω/km, j3.3 µS/km, -4 km)", "-4 km", "len", "a negative length"),
    ("abcd_line(50 Ω, j1 / 1 km, -3 km)", "-3 km", "len", "a negative length"),
    ("vswr(1.2)", "1.2", "G", "|Γ| ≤ 1 for a passive load"),
    ("return_loss(1.5)", "1.5", "G", "|Γ| ≤ 1 for a passive load"),
    ("pimatch_lp(50 Ω, 1000 Ω, 4, 10 MHz)", "4", "Q", "Bowick: Q ≥ √(Rhi/Rlo − 1)"),
    ("tmatch_hp(50 Ω, 1000 Ω, 0.999 * sqrt(19), 10 MHz)", "0.999 * sqrt(19)", "Q", "Bowick: Q ≥ √(Rhi/Rlo − 1)"),
    ("pimatch_hp(50 Ω, -1000 Ω, 40, 10 MHz)", "-1000 Ω", "RL", "a resistance > 0"),
    ("round(412 kvar, 0 kvar)", "0 kvar", "step", "a step > 0"),
    ("round_up(412 kvar, -50 kvar)", "-50 kvar", "step", "a step > 0"),
    ("size_up(1200 kVA, 300 kVA, 500 kVA, 750 kVA, 1000 kVA)", "1200 kVA", "x", "beyond every size (the largest named in the message)"),
    ("size_down(200 kVA, 300 kVA, 500 kVA, 750 kVA, 1000 kVA)", "200 kVA", "x", "below every size (the smallest named in the message)"),
    ("pick(0.5, 1 A, 2 A)", "0.5", "cond", "a condition is 0 or 1"),
    ("h_res(0 VA, 1 Mvar)", "0 VA", "Ssc", "no source"),
    ("fault_slg(1 pu, 0 pu, 0 pu, 0 pu, 0 pu)", "fault_slg(1 pu, 0 pu, 0 pu, 0 pu, 0 pu)", "", "every impedance zero: the whole call"),
    ("lmatch_z(50 Ω, j30 Ω, 1)", "j30 Ω", "ZL", "a lossless load cannot be matched"),
    ("awg(3.5)", "3.5", "n", "ASTM B258 gauges are whole numbers"),

    ("h_res(250 MVA, 0 var)", "0 var", "Qc", "no bank: no resonance (h = ∞)"),
    ("vswr(-1)", "-1", "G", "Pozar ch. 2: |Γ| = 1 gives an infinite VSWR, said so"),
    ("return_loss(0)", "0", "G", "IEEE Std 100: a matched load, Γ = 0, gives +∞ dB, said so"),
    ("pf(0 VA)", "0 VA", "S", "IEEE 1459: no power flows, the power factor is undefined"),
    ("pf_angle(0 VA)", "0 VA", "S", "IEEE 1459: no power flows, φ is undefined (not 0°, which reads as unity)"),]

PREAMBLE = f"""
VF = {mp.nstr(VF, 25)} V
"""


def encode(cases):
    out = []
    for case in cases:
        formula, value, what = case[:3]
        z = mp.mpc(value)
        d = {"formula": formula, "re": float(mp.re(z)), "im": float(mp.im(z)), "what": what}
        if len(case) > 3:
            d["scale"] = float(case[3])
        out.append(d)
    return out


def main():
    cases = (hyper_cases() + STEP_CASES + FAULT_BASIC + FAULT_CASES + PF_CASES + LINE_CASES + TWO_CASES
             + MATCH_CASES + AWG_CASES)
    doc = {
        "source": "mpmath at 100 digits, via tests/reference/gen_funcs_wide.py",
        "preamble": PREAMBLE.strip(),
        "cases": encode(cases),
        "opens": [{"formula": f, "what": w} for f, w in OPENS],
        "refused": [{"formula": f, "arg": a, "param": p, "what": w} for f, a, p, w in REFUSED],
    }
    print(json.dumps(doc, indent=1, ensure_ascii=False))


if __name__ == "__main__":
    main()
