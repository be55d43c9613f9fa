#!/usr/bin/env python3
"""Reference values for the engineering functions, computed independently
of ohmsheet with mpmath (50 significant digits) from the published
definitions named beside each case.

Run from the repository root:

    pip install mpmath==1.3.0
    python3 tests/reference/gen_funcs.py > tests/reference/funcs_vectors.json

tests/funcs_reference.rs evaluates every formula with ohmsheet and requires
agreement to 1e-9 relative. Values are in coherent SI units (Ω, V, A, F,
H, W, var, VA; angles in radians). Cases under "peak_cases" are evaluated
in a sheet that states `@amplitude peak`.

Sources:
- IEC 60050-131 (International Electrotechnical Vocabulary, circuit
  theory): impedance Z = R + jX, reactance of L and C, admittance.
- IEEE Std 1459-2010: complex power S = V·I*, P = Re S, Q = Im S;
  Q > 0 for an inductive (lagging) load. The power factor is |P|/|S|
  signed by lead/lag, not IEEE 1459's P/|S| (docs/functions.md).
- IEEE Std 141 (Red Book), power-factor correction: the kvar multiplier
  tan(acos pf1) − tan(acos pf2).
- A. E. Kennelly, "Equivalence of triangles and three-pointed stars in
  conducting networks", Electrical World and Engineer, 1899: delta ↔ wye.
- C. L. Fortescue, "Method of symmetrical co-ordinates applied to the
  solution of polyphase networks", AIEE Trans., 1918: sequence components,
  computed here by inverting the matrix A = [[1,1,1],[1,a²,a],[1,a,a²]]
  numerically rather than by the closed form.
- Per-unit: Z_base = kV²/MVA, I_base = MVA/(√3·kV), and the change-of-base
  rule Z_new = Z_old·(kV_old/kV_new)²·(MVA_new/MVA_old) (Grainger &
  Stevenson, Power System Analysis, ch. 2 — from memory).
- L-network: the handbook design equations Q = √(Rhi/Rlo − 1),
  X_series = Q·Rlo, X_shunt = Rhi/Q (Bowick, RF Circuit Design, ch. 4 —
  from memory); for a complex load the closed form in Pozar, Microwave
  Engineering, §5.1 (from memory), and each solution is verified here by
  computing the network's input impedance.
- π and T networks for a loaded Q: two L-networks back to back through a
  virtual resistance, Rv = Rhi/(Q² + 1) (π) or Rlo·(Q² + 1) (T) (Bowick,
  RF Circuit Design, ch. 4 — from memory); each design is verified here
  by computing the network's input impedance with the load, which must be
  exactly Rs.
- Decibels: IEC 60027-3 (logarithmic quantities): 20·log10 of a
  root-power ratio, 10·log10 of a power ratio, and back: 10^(L/10),
  10^(L/20).
- Lines and RF: the voltage reflection coefficient Γ = (ZL − Z0)/(ZL + Z0),
  VSWR = (1 + |Γ|)/(1 − |Γ|) and return loss −20·log10|Γ| (IEEE Std 100,
  the dictionary of terms); the telegrapher's line γ = √((R + jωL)(G + jωC)),
  Zc = √((R + jωL)/(G + jωC)) and Zin = Zc·(ZL + Zc·tanh γℓ)/(Zc + ZL·tanh γℓ),
  lossless Z0·(ZL + jZ0·tan θ)/(Z0 + jZL·tan θ) (Pozar, Microwave
  Engineering, ch. 2 — from memory); the power line's nominal π and exact
  long-line equivalent Z′ = Zc·sinh γℓ, Y′/2 = tanh(γℓ/2)/Zc, A = cosh γℓ,
  C = sinh(γℓ)/Zc (Grainger & Stevenson, Power System Analysis, ch. 6 —
  from memory). The closed forms are evaluated here as written, not in the
  rearranged forms ohmsheet uses.
- Two-ports: the transmission (ABCD) matrices of a series impedance
  [[1, Z], [0, 1]], a shunt admittance [[1, 0], [Y, 1]], a line
  [[cosh γℓ, Zc·sinh γℓ], [sinh γℓ/Zc, cosh γℓ]] and an ideal transformer
  [[n, 0], [0, 1/n*]], multiplied as matrices in cascade; V1 = A·V2 + B·I2,
  I1 = C·V2 + D·I2, Zin = (A·ZL + B)/(C·ZL + D) (Pozar, Microwave
  Engineering, §4.4 and table 4.1 — from memory).
- Hyperbolic functions and inverses: DLMF §4.28 and §4.37, principal
  branches, by mpmath; on the cuts by Python's cmath, which takes the
  value of the defining formula with the principal logarithm (mpmath
  takes atanh(x) for x > 1 from the other side of the cut, −jπ/2).
- Nameplate and fault-level impedances: |Z| = z·V²/S and V/(√3·I) with
  the angle atan(X/R); IEC 60909-0:2016 for the peak factor
  κ = 1.02 + 0.98·e^(−3R/X) and ip = κ·√2·Ik", Ik" = c·Un/(√3·|Zk|)
  (from memory).
- Unsymmetrical faults: solved here in the phase domain with mpmath (the
  Thevenin impedance matrix A·diag(Z0, Z1, Z2)·A⁻¹, the balanced
  pre-fault voltages and the fault's three constraints, a 6×6 linear
  system), not by the sequence-network connections ohmsheet uses.
- Voltage unbalance: |V2|/|V1| (IEC 61000-4-30) cross-checked by the
  magnitude-only form u2 = √((1 − √(3 − 6β))/(1 + √(3 − 6β))),
  β = Σ|V|⁴/(Σ|V|²)² of the line voltages (from memory); NEMA MG 1
  largest deviation from the average over the average (from memory).
- Harmonic resonance of a shunt bank h = √(S_sc/Q_c) (IEEE Std 1036,
  from memory).
- AWG: ASTM B258, d = 0.005 in · 92^((36 − n)/39) (from memory).
"""
import cmath
import json

import mpmath as mp

mp.mp.dps = 50
J = mp.mpc(0, 1)
PI = mp.pi
DEG = PI / 180
A120 = mp.expj(2 * PI / 3)


def polar(m, deg):
    return m * mp.expj(mp.mpf(deg) * DEG)


def par(*zs):
    return 1 / sum(1 / z for z in zs)


PREAMBLE = """
L1 = 25 mH
C1 = 3.3 µF
R1 = 18 Ω
f = 50 Hz
w = 2*pi*f
Vs = 230 V ∠ 10°
I1 = 12 A ∠ -35°
Vth = 415 V
Za = (4 + j3) Ω
Zb = (10 - j6) Ω
Zc = (2 + j9) Ω
Va = 7.2 kV ∠ 0°
Vb = 6.9 kV ∠ -125°
Vc = 7.4 kV ∠ 118°
"""
L1 = mp.mpf("25e-3")
C1 = mp.mpf("3.3e-6")
R1 = mp.mpf(18)
f = mp.mpf(50)
w = 2 * PI * f
Vs = polar(230, 10)
I1 = polar(12, -35)
Vth = mp.mpf(415)
Za = mp.mpc(4, 3)
Zb = mp.mpc(10, -6)
Zc = mp.mpc(2, 9)
Va = polar(7200, 0)
Vb = polar(6900, -125)
Vc = polar(7400, 118)


def tanphi(pf):
    """tan φ of a signed power factor (+ lagging, − leading)."""
    pf = mp.mpf(pf)
    t = mp.tan(mp.acos(abs(pf)))
    return t if pf > 0 else -t


def seq(xa, xb, xc):
    a = A120
    A = mp.matrix([[1, 1, 1], [1, a**2, a], [1, a, a**2]])
    s = mp.inverse(A) * mp.matrix([xa, xb, xc])
    return s[0], s[1], s[2]


def phases(x0, x1, x2):
    a = A120
    A = mp.matrix([[1, 1, 1], [1, a**2, a], [1, a, a**2]])
    p = A * mp.matrix([x0, x1, x2])
    return p[0], p[1], p[2]


def lnet(rs, rl):
    hi, lo = max(rs, rl), min(rs, rl)
    q = mp.sqrt(hi / lo - 1)
    return q, q * lo, hi / q  # Q, |X series|, |X shunt|


def lmatch_complex(rs, zl, sign):
    """Pozar §5.1; returns (X series, X shunt, shunt at load)."""
    r, x = mp.re(zl), mp.im(zl)
    if r > rs:
        m2 = r * r + x * x
        b = (x + sign * mp.sqrt(r / rs) * mp.sqrt(m2 - rs * r)) / m2
        xs = 1 / b + x * rs / r - rs / (b * r)
        zin = J * xs + 1 / (J * b + 1 / zl)
        out = (xs, -1 / b, 1)
    else:
        xs = sign * mp.sqrt(r * (rs - r)) - x
        b = sign * mp.sqrt((rs - r) / r) / rs
        zin = 1 / (J * b + 1 / (zl + J * xs))
        out = (xs, -1 / b, 0)
    # The network must present exactly rs to the source.
    assert abs(zin - rs) < mp.mpf("1e-40") * rs, zin
    return out


def pi_t(rs, rl, q, f, kind):
    """Bowick ch. 4; returns the three element values, source end first,
    and Rv, for kind in pi_lp, pi_hp, t_lp, t_hp."""
    rs, rl, q, w = mp.mpf(rs), mp.mpf(rl), mp.mpf(q), 2 * PI * mp.mpf(f)
    hi, lo = max(rs, rl), min(rs, rl)
    if kind.startswith("pi"):
        rv = hi / (q**2 + 1)
        qs, ql = mp.sqrt(rs / rv - 1), mp.sqrt(rl / rv - 1)
        x = [rs / qs, rv * (qs + ql), rl / ql]  # shunt, series, shunt
    else:
        rv = lo * (q**2 + 1)
        qs, ql = mp.sqrt(rv / rs - 1), mp.sqrt(rv / rl - 1)
        x = [qs * rs, rv / (qs + ql), ql * rl]  # series, shunt, series
    caps = {"pi_lp": [1, 0, 1], "pi_hp": [0, 1, 0], "t_lp": [0, 1, 0], "t_hp": [1, 0, 1]}[kind]
    el = [1 / (w * xi) if c else xi / w for xi, c in zip(x, caps)]
    z = [1 / (J * w * e) if c else J * w * e for e, c in zip(el, caps)]
    if kind.startswith("pi"):
        zin = par(z[0], z[1] + par(z[2], rl))
    else:
        zin = z[0] + par(z[1], z[2] + rl)
    assert abs(zin - rs) < mp.mpf("1e-40") * rs, (kind, zin)
    return el + [rv]


PI_LP = pi_t(50, 1000, 10, "10e6", "pi_lp")
PI_HP = pi_t(600, 75, 5, "3.5e6", "pi_hp")
T_LP = pi_t(50, 300, 4, "144e6", "t_lp")
T_HP = pi_t(200, 50, 3, "1e6", "t_hp")

d = [Za, Zb, Zc]  # as a delta: Zab, Zbc, Zca
sd = sum(d)
wye = (d[0] * d[2] / sd, d[0] * d[1] / sd, d[1] * d[2] / sd)
nw = Za * Zb + Zb * Zc + Zc * Za
delta = (nw / Zc, nw / Za, nw / Zb)
s0, s1, s2 = seq(Va, Vb, Vc)
pa, pb, pc = phases(mp.mpc(100, 20), polar(7000, -5), polar(800, 40))

m_lo = lnet(mp.mpf(50), mp.mpf(600))
w71 = 2 * PI * mp.mpf("7.1e6")
lz1 = lmatch_complex(mp.mpf(50), mp.mpc(12, 30), 1)
lz2 = lmatch_complex(mp.mpf(50), mp.mpc(12, 30), -1)
lz3 = lmatch_complex(mp.mpf(50), mp.mpc(300, -140), 1)

Vab = polar(400, 12)
Ia = polar(60, -28)
Van = Vab / (mp.sqrt(3) * mp.expj(30 * DEG))

S1 = Vs * mp.conj(I1)

# ---- lines and RF ----


def refl(zl, z0):
    return (zl - z0) / (zl + z0)


def vswr(g):
    return (1 + abs(g)) / (1 - abs(g))


def zin_line(zl, zc, gl):
    t = mp.tanh(gl)
    return zc * (zl + zc * t) / (zc + zl * t)


def zin_lossless(zl, z0, deg):
    t = mp.tan(mp.mpf(deg) * DEG)
    return z0 * (zl + J * z0 * t) / (z0 + J * zl * t)


def rlgc(r, l, g, c, f):
    w = 2 * PI * f
    z = r + J * w * l
    y = g + J * w * c
    return mp.sqrt(z * y), mp.sqrt(z / y)


# a coaxial-like line at 10 MHz: R 0.1 Ω/m, L 0.25 µH/m, G 20 µS/m, C 100 pF/m
LG, LZC = rlgc(mp.mpf("0.1"), mp.mpf("0.25e-6"), mp.mpf("20e-6"), mp.mpf("100e-12"), mp.mpf("10e6"))
# the same line's constants, given ω in rad/s
LG_W, LZC_W = rlgc(mp.mpf("0.1"), mp.mpf("0.25e-6"), 0, mp.mpf("100e-12"), mp.mpf("6e7") / (2 * PI))
ZLOAD = mp.mpc(30, 10)
GL = LG * mp.mpf(7)  # 7 m of it


def line_nominal(z, y, length):
    Z, Y = z * length, y * length
    return Z, Y / 2, 1 + Z * Y / 2, Z, Y * (1 + Z * Y / 4), 1 + Z * Y / 2


def line_exact(z, y, length):
    g, zc = mp.sqrt(z * y), mp.sqrt(z / y)
    gl = g * length
    return zc * mp.sinh(gl), mp.tanh(gl / 2) / zc, mp.cosh(gl), zc * mp.sinh(gl), mp.sinh(gl) / zc, mp.cosh(gl)


# a 400 km overhead line: z = 0.03 + j0.35 Ω/km, y = j3.3 µS/km (in SI per metre)
ZPM = mp.mpc("0.03e-3", "0.35e-3")
YPM = mp.mpc(0, "3.3e-9")
NOM = line_nominal(ZPM, YPM, mp.mpf(400e3))
EXA = line_exact(ZPM, YPM, mp.mpf(400e3))
LINE = "(0.03 + j0.35) Ω/km, j3.3 µS/km, 400 km"

# ---- two-ports, as 2×2 mpmath matrices ----


def m_series(z):
    return mp.matrix([[1, z], [0, 1]])


def m_shunt(y):
    return mp.matrix([[1, 0], [y, 1]])


def m_line(zc, gl):
    return mp.matrix([[mp.cosh(gl), zc * mp.sinh(gl)], [mp.sinh(gl) / zc, mp.cosh(gl)]])


def m_xfmr(n):
    return mp.matrix([[n, 0], [0, 1 / mp.conj(n)]])


TP_LINE = m_line(mp.mpc(60, -4), mp.mpc("0.002", "0.35") * 4)  # Zc 60 − j4 Ω, γ (0.002 + j0.35)/m, 4 m
TP = m_series(Za) * m_shunt(1 / Zb) * TP_LINE * m_xfmr(mp.mpf("2.5")) * m_shunt(mp.mpc(0, "0.01"))
TP_F = "cascade(abcd_series(Za), abcd_shunt(Zb), abcd_line((60 - j4) Ω, (0.002 + j0.35) / 1 metre, 4 metre), abcd_xfmr(2.5), abcd_shunt(j10 mS))"
TP2 = m_series(Za) * m_shunt(1 / Zb)
TP2_F = "cascade(abcd_series(Za), abcd_shunt(Zb))"
SEND = TP2 * mp.matrix([Vs, I1])
XF = m_xfmr(polar(2, 30))

# (ohmsheet formula, mpmath value, source)
CASES = [
    ("z_ind(L1, f)", J * w * L1, "IEC 60050-131: Z = jωL"),
    ("z_ind(L1, w)", J * w * L1, "IEC 60050-131: ω given in rad/s"),
    ("z_cap(C1, f)", 1 / (J * w * C1), "IEC 60050-131: Z = 1/(jωC)"),
    ("x_ind(L1, f)", w * L1, "IEC 60050-131: X = ωL"),
    ("x_cap(C1, f)", -1 / (w * C1), "IEC 60050-131: X = −1/(ωC)"),
    ("l_from_x(10 Ω, f)", 10 / w, "IEC 60050-131: L = X/ω"),
    ("c_from_x(-10 Ω, f)", 1 / (w * 10), "IEC 60050-131: C = −1/(ωX)"),
    ("f_res(L1, C1)", 1 / (2 * PI * mp.sqrt(L1 * C1)), "Thomson: f0 = 1/(2π√LC)"),
    ("q_series(R1, L1, C1)", mp.sqrt(L1 / C1) / R1, "series RLC: Q = ω0L/R"),
    ("q_parallel(R1, L1, C1)", R1 * mp.sqrt(C1 / L1), "parallel RLC: Q = R/(ω0L)"),
    ("q_of(Za)", mp.mpf(3) / 4, "Q = |X|/R"),
    ("vdiv(Vs, Za, Zb)", Vs * Zb / (Za + Zb), "KVL divider"),
    ("idiv(I1, Za, Zb)", I1 * Zb / (Za + Zb), "KCL divider"),
    ("norton_i(Vth, Za)", Vth / Za, "source transformation"),
    ("thevenin_v(I1, Zb)", I1 * Zb, "source transformation"),
    ("bus_zth(Za, Zb, Zc)", par(Za, Zb, Zc), "Thevenin impedance: sources zeroed"),
    ("bus_vth(Vs, Za, Zb, Zc)", Vs * par(Zb, Zc) / (Za + par(Zb, Zc)), "open-circuit voltage"),
    ("as_parallel(Za).R", abs(Za) ** 2 / mp.re(Za), "IEC 60050-131: Rp = 1/G, Y = 1/Z"),
    ("as_parallel(Za).X", abs(Za) ** 2 / mp.im(Za), "IEC 60050-131: Xp = −1/B, Y = 1/Z"),
    ("as_series(50 Ω, 20 Ω).Z", par(mp.mpf(50), 20 * J), "R ∥ jX"),
    ("as_series(50 Ω, -20 Ω).R", mp.re(par(mp.mpf(50), -20 * J)), "R ∥ jX"),
    ("as_series(50 Ω, -20 Ω).X", mp.im(par(mp.mpf(50), -20 * J)), "R ∥ jX"),
    ("s_vi(Vs, I1)", S1, "IEEE 1459: S = V·I*"),
    ("s_vz(Vs, Za)", abs(Vs) ** 2 / mp.conj(Za), "IEEE 1459 with I = V/Z"),
    ("s_iz(I1, Zb)", abs(I1) ** 2 * Zb, "IEEE 1459 with V = I·Z"),
    ("pf(s_vi(Vs, I1))", mp.re(S1) / abs(S1), "IEEE 1459: PF = P/|S|, lagging"),
    ("pf(Zb)", -mp.re(Zb) / abs(Zb), "IEEE 1459: PF = P/|S|, leading shown negative"),
    ("pf_angle(Za)", mp.atan2(3, 4), "φ = arg Z = arg S"),
    ("s_parts(s_vi(Vs, I1)).P", mp.re(S1), "IEEE 1459: P = Re S"),
    ("s_parts(s_vi(Vs, I1)).Q", mp.im(S1), "IEEE 1459: Q = Im S"),
    ("s_parts(s_vi(Vs, I1)).S", abs(S1), "IEEE 1459: |S|"),
    ("s_parts(s_vi(Vs, I1)).lag", mp.mpf(1), "Q > 0: lagging"),
    ("s_parts(s_vz(Vs, Zb)).lag", mp.mpf(-1), "Q < 0: leading"),
    ("best_load(Za)", mp.conj(Za), "maximum power transfer: ZL = Zth*"),
    ("p_max(Vth, Za)", Vth**2 / (4 * mp.re(Za)), "maximum power transfer: |V|²/(4R)"),
    ("s_of_p(75 kW, 0.74)", 75e3 * (1 + J * tanphi("0.74")), "IEEE 1459: Q = P·tan φ, lagging"),
    ("s_of_p(20 kW, -0.6)", 20e3 * (1 + J * tanphi("-0.6")), "IEEE 1459: leading, Q < 0"),
    ("q_pfc(180 kW, 0.72, 0.95)", 180e3 * (tanphi("0.72") - tanphi("0.95")), "IEEE 141 kvar multiplier"),
    ("q_pfc(100 kW, 0.8, -0.9)", 100e3 * (tanphi("0.8") - tanphi("-0.9")), "kvar multiplier to a leading pf"),
    ("cap_delta(60 kvar, 400 V, f)", 60e3 / (3 * w * 400**2), "Q per phase = ωC·V_LL² (delta)"),
    ("cap_wye(60 kvar, 400 V, f)", 60e3 / (3 * w * (400 / mp.sqrt(3)) ** 2), "Q per phase = ωC·V_LN² (wye)"),
    ("cap_1ph(5 kvar, 230 V, f)", 5e3 / (w * 230**2), "Q = ωC·V²"),
    ("i_line(180 kW, 400 V, 0.72)", 180e3 / (mp.sqrt(3) * 400 * mp.mpf("0.72")), "P = √3·V·I·pf"),
    ("ll_to_ln(400 V ∠ 12°)", Van, "Vab = √3·Van∠30° (positive sequence)"),
    ("ln_to_ll(Vs)", Vs * mp.sqrt(3) * mp.expj(30 * DEG), "Vab = √3·Van∠30°"),
    ("s3(400 V ∠ 12°, 60 A ∠ -28°)", 3 * Van * mp.conj(Ia), "S = 3·Van·Ia*"),
    ("p3(400 V, 50 A, 0.85)", mp.sqrt(3) * 400 * 50 * mp.mpf("0.85"), "P = √3·V·I·pf"),
    ("delta_to_wye(Za, Zb, Zc).a", wye[0], "Kennelly 1899"),
    ("delta_to_wye(Za, Zb, Zc).b", wye[1], "Kennelly 1899"),
    ("delta_to_wye(Za, Zb, Zc).c", wye[2], "Kennelly 1899"),
    ("wye_to_delta(Za, Zb, Zc).ab", delta[0], "Kennelly 1899"),
    ("wye_to_delta(Za, Zb, Zc).bc", delta[1], "Kennelly 1899"),
    ("wye_to_delta(Za, Zb, Zc).ca", delta[2], "Kennelly 1899"),
    ("to_seq(Va, Vb, Vc).zero", s0, "Fortescue 1918"),
    ("to_seq(Va, Vb, Vc).pos", s1, "Fortescue 1918"),
    ("to_seq(Va, Vb, Vc).neg", s2, "Fortescue 1918"),
    ("from_seq(100 V + j20 V, 7 kV ∠ -5°, 800 V ∠ 40°).a", pa, "Fortescue 1918"),
    ("from_seq(100 V + j20 V, 7 kV ∠ -5°, 800 V ∠ 40°).b", pb, "Fortescue 1918"),
    ("from_seq(100 V + j20 V, 7 kV ∠ -5°, 800 V ∠ 40°).c", pc, "Fortescue 1918"),
    ("rot120()", A120, "the operator a = 1∠120°"),
    ("z_base(13.8 kV, 100 MVA)", mp.mpf(13.8) ** 2 / 100, "Z_base = kV²/MVA"),
    ("i_base(13.8 kV, 100 MVA)", 100e6 / (mp.sqrt(3) * 13.8e3), "I_base = VA/(√3·V)"),
    ("pu_to_ohm(j0.12 pu, 13.8 kV, 100 MVA)", 0.12 * J * mp.mpf(13.8) ** 2 / 100, "Z = Z_pu·Z_base"),
    ("ohm_to_pu((0.4 + j2.2) Ω, 11 kV, 20 MVA)", mp.mpc("0.4", "2.2") / (mp.mpf(11) ** 2 / 20), "Z_pu = Z/Z_base"),
    ("rebase(j0.08 pu, 11 kV, 15 MVA, 11.5 kV, 100 MVA)", 0.08 * J * (mp.mpf(11) / mp.mpf("11.5")) ** 2 * (100 / mp.mpf(15)), "change of base"),
    ("lmatch_lp(50 Ω, 600 Ω, 7.1 MHz).L", m_lo[1] / w71, "L-network, series L on the low side"),
    ("lmatch_lp(50 Ω, 600 Ω, 7.1 MHz).C", 1 / (w71 * m_lo[2]), "L-network, shunt C across the high side"),
    ("lmatch_lp(50 Ω, 600 Ω, 7.1 MHz).Q", m_lo[0], "L-network Q"),
    ("lmatch_hp(600 Ω, 50 Ω, 7.1 MHz).C", 1 / (w71 * m_lo[1]), "L-network, series C"),
    ("lmatch_hp(600 Ω, 50 Ω, 7.1 MHz).L", m_lo[2] / w71, "L-network, shunt L"),
    ("lmatch_z(50 Ω, (12 + j30) Ω, 1).Xs", lz1[0], "Pozar §5.1, RL < Rs, + solution"),
    ("lmatch_z(50 Ω, (12 + j30) Ω, 1).Xp", lz1[1], "Pozar §5.1, RL < Rs, + solution"),
    ("lmatch_z(50 Ω, (12 + j30) Ω, -1).Xs", lz2[0], "Pozar §5.1, RL < Rs, − solution"),
    ("lmatch_z(50 Ω, (12 + j30) Ω, -1).Xp", lz2[1], "Pozar §5.1, RL < Rs, − solution"),
    ("lmatch_z(50 Ω, (12 + j30) Ω, -1).at_load", mp.mpf(lz2[2]), "shunt across the source"),
    ("lmatch_z(50 Ω, (300 - j140) Ω, 1).Xs", lz3[0], "Pozar §5.1, RL > Rs"),
    ("lmatch_z(50 Ω, (300 - j140) Ω, 1).Xp", lz3[1], "Pozar §5.1, RL > Rs"),
    ("lmatch_z(50 Ω, (300 - j140) Ω, 1).at_load", mp.mpf(lz3[2]), "shunt across the load"),
    ("pimatch_lp(50 Ω, 1000 Ω, 10, 10 MHz).C1", PI_LP[0], "Bowick ch. 4: π, shunt C across Rs"),
    ("pimatch_lp(50 Ω, 1000 Ω, 10, 10 MHz).L", PI_LP[1], "Bowick ch. 4: π, series L"),
    ("pimatch_lp(50 Ω, 1000 Ω, 10, 10 MHz).C2", PI_LP[2], "Bowick ch. 4: π, shunt C across RL"),
    ("pimatch_lp(50 Ω, 1000 Ω, 10, 10 MHz).Rv", PI_LP[3], "π virtual resistance Rhi/(Q² + 1)"),
    ("pimatch_hp(600 Ω, 75 Ω, 5, 3.5 MHz).L1", PI_HP[0], "Bowick ch. 4: π high-pass"),
    ("pimatch_hp(600 Ω, 75 Ω, 5, 3.5 MHz).C", PI_HP[1], "Bowick ch. 4: π high-pass"),
    ("pimatch_hp(600 Ω, 75 Ω, 5, 3.5 MHz).L2", PI_HP[2], "Bowick ch. 4: π high-pass"),
    ("tmatch_lp(50 Ω, 300 Ω, 4, 144 MHz).L1", T_LP[0], "Bowick ch. 4: T, series L next to Rs"),
    ("tmatch_lp(50 Ω, 300 Ω, 4, 144 MHz).C", T_LP[1], "Bowick ch. 4: T, shunt C"),
    ("tmatch_lp(50 Ω, 300 Ω, 4, 144 MHz).L2", T_LP[2], "Bowick ch. 4: T, series L next to RL"),
    ("tmatch_lp(50 Ω, 300 Ω, 4, 144 MHz).Rv", T_LP[3], "T virtual resistance Rlo·(Q² + 1)"),
    ("tmatch_hp(200 Ω, 50 Ω, 3, (2*pi*1e6) rad/s).C1", T_HP[0], "Bowick ch. 4: T high-pass, ω in rad/s"),
    ("tmatch_hp(200 Ω, 50 Ω, 3, 1 MHz).L", T_HP[1], "Bowick ch. 4: T high-pass"),
    ("tmatch_hp(200 Ω, 50 Ω, 3, 1 MHz).C2", T_HP[2], "Bowick ch. 4: T high-pass"),
    ("db_v(0.5)", 20 * mp.log10(mp.mpf("0.5")), "IEC 60027-3: 20·log10"),
    ("db_v(-3 + j4)", 20 * mp.log10(5), "IEC 60027-3: of the magnitude"),
    ("db_p(2)", 10 * mp.log10(2), "IEC 60027-3: 10·log10"),
    ("refl((75 + j25) Ω, 50 Ω)", refl(mp.mpc(75, 25), 50), "IEEE Std 100: Γ = (ZL − Z0)/(ZL + Z0)"),
    ("refl((10 - j40) Ω, (50 - j2) Ω)", refl(mp.mpc(10, -40), mp.mpc(50, -2)), "Γ on a complex reference"),
    ("refl(j0.3 pu, 1 pu)", refl(0.3 * J, 1), "Γ in per-unit"),
    ("vswr(refl((75 + j25) Ω, 50 Ω))", vswr(refl(mp.mpc(75, 25), 50)), "IEEE Std 100: VSWR = (1 + |Γ|)/(1 − |Γ|)"),
    ("vswr(0.2 ∠ 120°)", vswr(mp.mpf("0.2")), "VSWR depends on |Γ| only"),
    ("return_loss(0.2 ∠ 120°)", -20 * mp.log10(mp.mpf("0.2")), "IEEE Std 100: RL = −20·log10|Γ|"),
    ("return_loss(refl(100 Ω, 50 Ω))", -20 * mp.log10(abs(refl(100, 50))), "RL of a 2:1 mismatch"),
    ("from_db_p(3)", mp.mpf(10) ** (mp.mpf(3) / 10), "IEC 60027-3: 10^(L/10)"),
    ("from_db_p(-20)", mp.mpf(10) ** -2, "IEC 60027-3: 10^(L/10)"),
    ("from_db_v(-6)", mp.mpf(10) ** (mp.mpf(-6) / 20), "IEC 60027-3: 10^(L/20)"),
    ("line_rlgc(0.1 Ω/m, 0.25 µH/m, 20 µS/m, 100 pF/m, 10 MHz).gamma", LG, "telegrapher: γ = √(zy)"),
    ("line_rlgc(0.1 Ω/m, 0.25 µH/m, 20 µS/m, 100 pF/m, 10 MHz).Zc", LZC, "telegrapher: Zc = √(z/y)"),
    ("line_rlgc(0.1 Ω/m, 0.25 µH/m, 0 S/m, 100 pF/m, 60 Mrad/s).gamma", LG_W, "ω given in rad/s"),
    ("line_rlgc(0.1 Ω/m, 0.25 µH/m, 0 S/m, 100 pF/m, 60 Mrad/s).Zc", LZC_W, "ω given in rad/s"),
    ("zin_lossless((30 + j10) Ω, 50 Ω, 60°)", zin_lossless(ZLOAD, 50, 60), "Pozar ch. 2: lossless line, tan form"),
    ("zin_lossless((120 - j45) Ω, 75 Ω, 0.4 rad)", zin_lossless(mp.mpc(120, -45), 75, mp.mpf("0.4") / DEG), "θ in radians"),
    ("zin_lossless(20 Ω, 50 Ω, 135°)", zin_lossless(20, 50, 135), "beyond a quarter wave"),
    ("zin_line((30 + j10) Ω, line_rlgc(0.1 Ω/m, 0.25 µH/m, 20 µS/m, 100 pF/m, 10 MHz).Zc, "
     "line_rlgc(0.1 Ω/m, 0.25 µH/m, 20 µS/m, 100 pF/m, 10 MHz).gamma, 7 metre)",
     zin_line(ZLOAD, LZC, GL), "Pozar ch. 2: the lossy line, tanh form"),
    ("zin_line(0 Ω, (300 - j20) Ω, (0.02 + j1.1) / 1 km, 60 km)",
     zin_line(0, mp.mpc(300, -20), mp.mpc("0.02e-3", "1.1e-3") * 60e3), "a shorted lossy stub"),
    (f"line_pi({LINE}).Z", NOM[0], "nominal π: Z = zℓ"),
    (f"line_pi({LINE}).Y2", NOM[1], "nominal π: Y/2 = yℓ/2"),
    (f"line_pi({LINE}).A", NOM[2], "nominal π: A = 1 + ZY/2"),
    (f"line_pi({LINE}).B", NOM[3], "nominal π: B = Z"),
    (f"line_pi({LINE}).C", NOM[4], "nominal π: C = Y(1 + ZY/4)"),
    (f"line_pi({LINE}).D", NOM[5], "nominal π: D = A"),
    (f"line_pi_exact({LINE}).Z", EXA[0], "long line: Z′ = Zc·sinh γℓ"),
    (f"line_pi_exact({LINE}).Y2", EXA[1], "long line: Y′/2 = tanh(γℓ/2)/Zc"),
    (f"line_pi_exact({LINE}).A", EXA[2], "long line: A = cosh γℓ"),
    (f"line_pi_exact({LINE}).B", EXA[3], "long line: B = Zc·sinh γℓ"),
    (f"line_pi_exact({LINE}).C", EXA[4], "long line: C = sinh(γℓ)/Zc"),
    (f"line_pi_exact({LINE}).D", EXA[5], "long line: D = cosh γℓ"),
    ("abcd_series(Za).B", Za, "series element: B = Z"),
    ("abcd_series(j0.1 pu).C", 0, "series element: C = 0"),
    ("abcd_shunt(Zb).C", 1 / Zb, "shunt element: C = 1/Z"),
    ("abcd_shunt(j10 mS).C", mp.mpc(0, "0.01"), "shunt element given as an admittance"),
    ("abcd_line((60 - j4) Ω, (0.002 + j0.35) / 1 metre, 4 metre).A", TP_LINE[0, 0], "line: A = cosh γℓ"),
    ("abcd_line((60 - j4) Ω, (0.002 + j0.35) / 1 metre, 4 metre).B", TP_LINE[0, 1], "line: B = Zc·sinh γℓ"),
    ("abcd_line((60 - j4) Ω, (0.002 + j0.35) / 1 metre, 4 metre).C", TP_LINE[1, 0], "line: C = sinh γℓ/Zc"),
    ("abcd_xfmr(2 ∠ 30°).A", XF[0, 0], "ideal transformer: A = n"),
    ("abcd_xfmr(2 ∠ 30°).D", XF[1, 1], "ideal transformer: D = 1/n*"),
    (TP_F + ".A", TP[0, 0], "cascade: matrix product"),
    (TP_F + ".B", TP[0, 1], "cascade: matrix product"),
    (TP_F + ".C", TP[1, 0], "cascade: matrix product"),
    (TP_F + ".D", TP[1, 1], "cascade: matrix product"),
    ("abcd_send(" + TP2_F + ", Vs, I1).V", SEND[0], "V1 = A·V2 + B·I2"),
    ("abcd_send(" + TP2_F + ", Vs, I1).I", SEND[1], "I1 = C·V2 + D·I2"),
    ("abcd_zin(" + TP_F + ", Zc)", (TP[0, 0] * Zc + TP[0, 1]) / (TP[1, 0] * Zc + TP[1, 1]), "Zin = (A·ZL + B)/(C·ZL + D)"),
    ("abcd_zin(" + TP2_F + ", 1 Ω / 0)", TP2[0, 0] / TP2[1, 0], "open load: Zin = A/C"),
    ("vdrop(240 V, 228 V ∠ -3°)", (mp.mpf(240) - 228) / 240, "drop as a fraction of sending voltage"),
    ("vreg(250 V, 240 V)", (mp.mpf(250) - 240) / 240, "regulation as a fraction of full-load voltage"),
]

# Issue 13 (numerics). The power factor of a source: pf is |P|/|S| signed
# by lead/lag (+ when Q >= 0, load convention) for loads and sources
# (P < 0) alike, and pf_angle = atan(Q/|P|), so cos(pf_angle) = |pf|
# (docs/functions.md; not IEEE 1459's P/|S|, whose sign follows P).
# Per-unit line and phase voltages are equal in magnitude on three-phase
# bases, V_LN,base = V_LL,base/sqrt(3); only the 30 degree shift applies
# (the per-unit convention, from memory). An open element (a capacitor of
# 0 F, Z = -j inf) takes the whole voltage of a divider and drops out of a
# bus: the circuit's limits.
NUMERICS_CASES = [
    ("pf((-800 + j600) VA)", mp.mpf("0.8"), "source, Q > 0: +|P|/|S|, lagging in the load convention"),
    ("pf((-800 - j600) VA)", mp.mpf("-0.8"), "source, Q < 0: -|P|/|S|, leading"),
    ("pf_angle((-800 + j600) VA)", mp.atan(mp.mpf(600) / 800), "phi = atan(Q/|P|), cos phi = |pf|"),
    ("pf_angle((-800 - j600) VA)", -mp.atan(mp.mpf(600) / 800), "phi = atan(Q/|P|), leading"),
    ("pf_angle(Zb)", mp.atan2(-6, 10), "phi = atan(X/R) of a load impedance"),
    ("ll_to_ln(1 pu ∠ 30°)", mp.mpf(1), "per-unit: |Van| = |Vab|, the 30 degree shift only"),
    ("ln_to_ll(0.98 pu ∠ -10°)", polar(mp.mpf("0.98"), 20), "per-unit: the 30 degree shift only"),
    ("vdiv(Vs, Za, z_cap(0 F, f))", Vs, "an open Zb takes the whole voltage"),
    ("bus_vth(Vs, Za, Zb, z_cap(0 F, f))", Vs * Zb / (Za + Zb), "an open shunt drops out"),
    ("bus_zth(Za, z_cap(0 F, f))", Za, "an open shunt drops out"),
    ("as_parallel(j5 Ω).X", mp.mpf(5), "a pure reactance: Xp = X (and Rp is open)"),
]
CASES += NUMERICS_CASES


def z_of_xr(m, xr):
    """|Z| = m at the angle atan(X/R)."""
    return m * mp.expj(mp.atan(xr))


def fault_phase_solve(kind, vf, z1, z2, z0, zf):
    """Fault currents by a phase-domain solve (mpmath, 50 digits, so the
    output is the same on every machine): unknowns Ia, Ib, Ic and the bus
    voltages Va, Vb, Vc; V + Zabc·I = E, plus the fault's three
    constraints. Returns (a, b, c, zero, pos, neg, ground)."""
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
    if kind == "slg":  # Va = Zf·Ia, Ib = Ic = 0
        m[3, 3], m[3, 0] = 1, -zf
        m[4, 1] = 1
        m[5, 2] = 1
    elif kind == "ll":  # Ia = 0, Ib + Ic = 0, Vb − Vc = Zf·Ib
        m[3, 0] = 1
        m[4, 1], m[4, 2] = 1, 1
        m[5, 4], m[5, 5], m[5, 1] = 1, -1, -zf
    else:  # dlg: Ia = 0, Vb = Vc, Vb = Zf·(Ib + Ic)
        m[3, 0] = 1
        m[4, 4], m[4, 5] = 1, -1
        m[5, 4], m[5, 1], m[5, 2] = 1, -zf, -zf
    x = mp.lu_solve(m, rhs)
    i = [x[0], x[1], x[2]]
    s = Ai * mp.matrix(i)
    return (i[0], i[1], i[2], s[0], s[1], s[2], i[0] + i[1] + i[2])


FIELDS = ["a", "b", "c", "zero", "pos", "neg", "ground"]


def fault_cases(call, kind, vf, z1, z2, z0, zf, what):
    got = fault_phase_solve(kind, mp.mpc(vf), mp.mpc(z1), mp.mpc(z2), mp.mpc(z0), mp.mpc(zf))
    # the currents that are exactly zero compare absolutely, so leave them out
    # of the relative check and test them in tests/faults.rs instead
    return [(f"{call}.{n}", mp.mpc(v), what) for n, v in zip(FIELDS, got) if abs(v) > 1e-9 * abs(got[4])]


def vuf_beta(vab, vbc, vca):
    """IEC 61000-4-30 magnitude form of |U2|/|U1| from line voltages."""
    m = [abs(vab), abs(vbc), abs(vca)]
    beta = sum(x**4 for x in m) / sum(x**2 for x in m) ** 2
    r = mp.sqrt(3 - 6 * beta)
    return mp.sqrt((1 - r) / (1 + r))


def nema(vab, vbc, vca):
    m = [abs(vab), abs(vbc), abs(vca)]
    avg = sum(m) / 3
    return max(abs(x - avg) for x in m) / avg


INCH = mp.mpf("0.0254")


def awg_d(n):
    return mp.mpf("0.005") * INCH * mp.power(92, mp.mpf(36 - n) / 39)


def kappa(xr):
    return mp.mpf("1.02") + mp.mpf("0.98") * mp.exp(-3 / mp.mpf(xr))


# An 11 kV / 0.415 kV, 1.5 MVA, 6.5 % (X/R 7) transformer fed from a
# 250 MVA (X/R 12) source; invented numbers, in ohms on the 415 V side.
V_LV = mp.mpf(415)
ZT = z_of_xr(mp.mpf("0.065") * V_LV**2 / mp.mpf("1.5e6"), 7)
ZQ = z_of_xr(mp.mpf(11000) ** 2 / mp.mpf("250e6"), 12) * (V_LV / 11000) ** 2
Z1F = ZQ + ZT
Z0F = ZT * mp.mpf("0.9")
VF = V_LV / mp.sqrt(3)
# line voltages of an unbalanced set: differences of phase voltages, so
# they close (Vab + Vbc + Vca = 0) as the β form assumes
Vpa, Vpb, Vpc = polar(240, 0), polar(232, -118), polar(236, 121)
Vab_u, Vbc_u, Vca_u = Vpa - Vpb, Vpb - Vpc, Vpc - Vpa

STUDY_CASES = [
    ("sinh(0.7)", mp.sinh(mp.mpf("0.7")), "DLMF 4.28, mpmath"),
    ("cosh(-1.3)", mp.cosh(mp.mpf("-1.3")), "DLMF 4.28, mpmath"),
    ("tanh(0.4 - j1.1)", mp.tanh(mp.mpc("0.4", "-1.1")), "DLMF 4.28, mpmath"),
    ("sinh(1.2 + j0.8)", mp.sinh(mp.mpc("1.2", "0.8")), "DLMF 4.28, mpmath"),
    ("cosh(j*pi/3)", mp.cosh(J * PI / 3), "cosh(jx) = cos x"),
    ("asinh(2.5)", mp.asinh(mp.mpf("2.5")), "DLMF 4.37, mpmath"),
    ("asinh(-0.3 + j2)", mp.asinh(mp.mpc("-0.3", "2")), "DLMF 4.37, mpmath, near the cut"),
    ("asinh(j*2)", mp.asinh(2 * J), "DLMF 4.37: on the cut, mpmath and cmath agree"),
    ("asinh(-j*2)", cmath.asinh(-2j), "DLMF 4.37: on the lower cut, cmath"),
    ("acosh(3)", mp.acosh(3), "DLMF 4.37, mpmath"),
    ("acosh(0.5)", mp.acosh(mp.mpf("0.5")), "DLMF 4.37: j·acos x inside [-1, 1]"),
    ("acosh(-2)", mp.acosh(-2), "DLMF 4.37: on the cut, + jπ (mpmath, cmath)"),
    ("acosh(-2 + j0.5)", mp.acosh(mp.mpc(-2, "0.5")), "DLMF 4.37, mpmath"),
    ("acosh(-2 - j0.5)", mp.acosh(mp.mpc(-2, "-0.5")), "DLMF 4.37, mpmath, below the cut"),
    ("atanh(0.5)", mp.atanh(mp.mpf("0.5")), "DLMF 4.37, mpmath"),
    ("atanh(2)", cmath.atanh(2), "½·ln((1+x)/(1−x)) with the principal ln: + jπ/2 (cmath)"),
    ("atanh(-2)", cmath.atanh(-2), "½·ln((1+x)/(1−x)): + jπ/2 (cmath, mpmath)"),
    ("atanh(0.3 + j1.7)", mp.atanh(mp.mpc("0.3", "1.7")), "DLMF 4.37, mpmath"),
    ("atanh(2 - j0.1)", mp.atanh(mp.mpc(2, "-0.1")), "DLMF 4.37, mpmath, below the cut"),
    ("round(412 kvar, 50 kvar)", mp.mpf(400e3), "nearest 50 kvar"),
    ("round_up(412 kvar, 50 kvar)", 50e3 * mp.ceil(mp.mpf(412) / 50), "ceil: the next 50 kvar up"),
    ("round_down(412 kvar, 50 kvar)", 50e3 * mp.floor(mp.mpf(412) / 50), "floor: the next 50 kvar down"),
    ("size_up(620 kVA, 300 kVA, 500 kVA, 750 kVA, 1000 kVA)", mp.mpf(750e3), "the next rating up"),
    ("size_down(620 kVA, 300 kVA, 500 kVA, 750 kVA, 1000 kVA)", mp.mpf(500e3), "the next rating down"),
    ("pick(1, Za, Zb)", Za, "cond 1: the first branch"),
    ("pick(0, Za, Zb)", Zb, "cond 0: the second branch"),
    ("z_xr(10 Ω, 4)", z_of_xr(10, 4), "|Z|∠atan(X/R)"),
    ("z_plate(6.5 %, 7, 415 V, 1.5 MVA)", ZT, "z·V²/S at atan(X/R)"),
    ("z_plate(6.5 %, 7, 11 kV, 1.5 MVA)", ZT * (11000 / V_LV) ** 2, "the same, on the 11 kV side"),
    ("z_plate(0.08 pu, 10, 1.05 pu, 0.15 pu)", z_of_xr(mp.mpf("0.08") * mp.mpf("1.05") ** 2 / mp.mpf("0.15"), 10), "change of base in per-unit"),
    ("z_src(250 MVA, 12, 11 kV)", z_of_xr(mp.mpf(11000) ** 2 / mp.mpf("250e6"), 12), "V²/S_sc at atan(X/R)"),
    ("z_src(13.1 kA, 12, 11 kV)", z_of_xr(mp.mpf(11000) / (mp.sqrt(3) * mp.mpf(13100)), 12), "V/(√3·I_sc) at atan(X/R)"),
    ("z_refer((0.2 + j1.1) Ω, 11 kV, 415 V)", mp.mpc("0.2", "1.1") * (V_LV / 11000) ** 2, "Z·(V2/V1)²"),
    ("z_refer(2 mS, 11 kV, 415 V)", mp.mpf("2e-3") * (11000 / V_LV) ** 2, "Y·(V1/V2)²"),
    ("kappa(12)", kappa(12), "IEC 60909-0: 1.02 + 0.98·e^(−3R/X)"),
    ("kappa(0.5)", kappa(mp.mpf("0.5")), "IEC 60909-0"),
    ("sc_peak(415 V, (0.4 + j2.9) mΩ, 1.05).Ik", mp.mpf("1.05") * 415 / (mp.sqrt(3) * abs(mp.mpc("0.4e-3", "2.9e-3"))), "Ik\" = c·Un/(√3·|Zk|)"),
    ("sc_peak(415 V, (0.4 + j2.9) mΩ, 1.05).kappa", kappa(mp.mpf("2.9") / mp.mpf("0.4")), "κ from R/X of Zk"),
    ("sc_peak(415 V, (0.4 + j2.9) mΩ, 1.05).ip", kappa(mp.mpf("2.9") / mp.mpf("0.4")) * mp.sqrt(2) * mp.mpf("1.05") * 415 / (mp.sqrt(3) * abs(mp.mpc("0.4e-3", "2.9e-3"))), "ip = κ·√2·Ik\""),
    ("sc_peak(1 pu, j0.05 pu, 1.1).Ik", mp.mpf("1.1") / mp.mpf("0.05"), "per-unit: c·V/|Z|"),
    ("h_res(250 MVA, 1.2 Mvar)", mp.sqrt(mp.mpf(250) / mp.mpf("1.2")), "h = √(S_sc/Q_c)"),
    ("unbalance_seq(Vab_u, Vbc_u, Vca_u)", vuf_beta(Vab_u, Vbc_u, Vca_u), "IEC 61000-4-30 β form (magnitudes only)"),
    ("unbalance_seq(Va, Vb, Vc)", abs(s2) / abs(s1), "|V2|/|V1| (Fortescue, matrix inverse)"),
    ("unbalance_seq(Vpa, Vpb, Vpc)", vuf_beta(Vab_u, Vbc_u, Vca_u), "phase voltages give the line voltages' ratio (β form)"),
    ("unbalance_dev(Vab_u, Vbc_u, Vca_u)", nema(Vab_u, Vbc_u, Vca_u), "NEMA MG 1: max deviation / average"),
    ("awg(10).d", awg_d(10), "ASTM B258"),
    ("awg(10).A", PI / 4 * awg_d(10) ** 2, "ASTM B258, π·d²/4"),
    ("awg(-3).d", awg_d(-3), "ASTM B258: 0000 is 0.46 in"),
    ("awg0(4).A", PI / 4 * awg_d(-3) ** 2, "4/0 = 0000"),
    ("awg0(1).d", awg_d(0), "1/0 = 0"),
    ("awg(36).d", mp.mpf("0.005") * INCH, "ASTM B258: 36 is 0.005 in"),
]
STUDY_CASES += fault_cases("fault_slg(VF, Z1F, Z1F, Z0F, 0 Ω)", "slg", VF, Z1F, Z1F, Z0F, 0, "SLG, phase-domain solve (mpmath)")
STUDY_CASES += fault_cases("fault_slg(VF, Z1F, Z1F, Z0F, 0.5 Ω)", "slg", VF, Z1F, Z1F, Z0F, mp.mpf("0.5"), "SLG through 0.5 Ω (mpmath)")
STUDY_CASES += fault_cases("fault_ll(VF, Z1F, Z1F, 0 Ω)", "ll", VF, Z1F, Z1F, Z0F, 0, "LL, phase-domain solve (mpmath)")
STUDY_CASES += fault_cases("fault_ll(VF, Z1F, Z1F * 1.1, 0.02 Ω)", "ll", VF, Z1F, Z1F * mp.mpf("1.1"), Z0F, mp.mpf("0.02"), "LL through 0.02 Ω, Z2 ≠ Z1 (mpmath)")
STUDY_CASES += fault_cases("fault_dlg(VF, Z1F, Z1F, Z0F, 0 Ω)", "dlg", VF, Z1F, Z1F, Z0F, 0, "DLG, phase-domain solve (mpmath)")
STUDY_CASES += fault_cases("fault_dlg(VF, Z1F, Z1F * 1.1, Z0F, 0.3 Ω)", "dlg", VF, Z1F, Z1F * mp.mpf("1.1"), Z0F, mp.mpf("0.3"), "DLG through 0.3 Ω (mpmath)")
STUDY_CASES += fault_cases("fault_dlg(0.98 pu, j0.12 pu, j0.14 pu, (0.02 + j0.3) pu, 0.1 pu)", "dlg", mp.mpf("0.98"), mp.mpc(0, "0.12"), mp.mpc(0, "0.14"), mp.mpc("0.02", "0.3"), mp.mpf("0.1"), "DLG in per-unit (mpmath)")
CASES += STUDY_CASES

STUDY_PREAMBLE = f"""
VF = {mp.nstr(VF, 20)} V
Z1F = ({mp.nstr(mp.re(Z1F), 20)} + j{mp.nstr(mp.im(Z1F), 20)}) Ω
Z0F = ({mp.nstr(mp.re(Z0F), 20)} + j{mp.nstr(mp.im(Z0F), 20)}) Ω
Vpa = 240 V
Vpb = 232 V ∠ -118°
Vpc = 236 V ∠ 121°
Vab_u = Vpa - Vpb
Vbc_u = Vpb - Vpc
Vca_u = Vpc - Vpa
"""
PREAMBLE += STUDY_PREAMBLE

# Evaluated under `@amplitude peak`: power from peak phasors is halved.
PEAK_CASES = [
    ("s_vi(Vs, I1)", S1 / 2, "IEEE 1459 with peak phasors: S = ½·V·I*"),
    ("s_vz(Vs, Za)", abs(Vs) ** 2 / mp.conj(Za) / 2, "½·|V|²/Z*"),
    ("s_iz(I1, Zb)", abs(I1) ** 2 * Zb / 2, "½·|I|²·Z"),
    ("p_max(Vth, Za)", Vth**2 / (8 * mp.re(Za)), "|Vpk|²/(8R)"),
    ("cap_delta(60 kvar, 400 V, f)", 60e3 / (3 * w * 400**2 / 2), "Q = ωC·Vpk²/2 per phase"),
    ("cap_1ph(5 kvar, 230 V, f)", 5e3 / (w * 230**2 / 2), "Q = ωC·Vpk²/2"),
    ("i_line(180 kW, 400 V, 0.72)", 180e3 / (mp.sqrt(3) / 2 * 400 * mp.mpf("0.72")), "P = (√3/2)·Vpk·Ipk·pf"),
    ("s3(400 V ∠ 12°, 60 A ∠ -28°)", 3 * Van * mp.conj(Ia) / 2, "S = (3/2)·Van·Ia*"),
    ("p3(400 V, 50 A, 0.85)", mp.sqrt(3) / 2 * 400 * 50 * mp.mpf("0.85"), "(√3/2)·V·I·pf"),
    ("z_plate(6.5 %, 7, 415 V, 1.5 MVA)", ZT / 2, "peak V: z·(V/√2)²/S"),
    ("z_src(250 MVA, 12, 11 kV)", z_of_xr(mp.mpf(11000) ** 2 / mp.mpf("250e6"), 12) / 2, "peak V: (V/√2)²/S_sc"),
    ("sc_peak(415 V, (0.4 + j2.9) mΩ, 1.05).ip", kappa(mp.mpf("2.9") / mp.mpf("0.4")) * mp.mpf("1.05") * 415 / (mp.sqrt(3) * abs(mp.mpc("0.4e-3", "2.9e-3"))), "peak phasors: ip = κ·Ik (already peak)"),
]


def encode(cases):
    out = []
    for formula, value, what in cases:
        z = mp.mpc(value)
        out.append({"formula": formula, "re": float(mp.re(z)), "im": float(mp.im(z)), "what": what})
    return out


def main():
    doc = {
        "source": "mpmath 1.3.0 at 50 digits, via tests/reference/gen_funcs.py",
        "preamble": PREAMBLE.strip(),
        "cases": encode(CASES),
        "peak_cases": encode(PEAK_CASES),
    }
    print(json.dumps(doc, indent=1, ensure_ascii=False))


if __name__ == "__main__":
    main()
