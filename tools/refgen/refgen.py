#!/usr/bin/env python3
"""Reference tables for shadegate's f64 shading models, from two outside sources.

  --mpmath   the published formulas evaluated with mpmath at 50 significant digits
             (written straight from the papers, independent of the Rust code), into
             tests/data/reference/mpmath/<model>.csv
  --mitsuba  the same quantities from the Mitsuba 3 renderer (variant scalar_rgb, which
             computes in single precision), into tests/data/reference/mitsuba/<model>.csv
  --integrated  the integrated models (directional albedo, split-sum terms) by scipy's
             QUADPACK over the light direction, into tests/data/reference/integrated/
  --check    regenerate in memory and compare with the committed files; exit 1 on any
             difference in the data. The first line (generator and versions) is left out
             of the comparison and only reported when it differs, so that a different
             Python or library version fails only if it changes a value.

With none of --mpmath, --mitsuba, --integrated, all are generated. Each file is named after the
registry model it checks (harness/reference/mod.rs); its columns are that model's
parameters in order, then `expected`. Lines starting with '#' are comments: the first
names the generator and the library versions.

Packages: mpmath (for --mpmath), mitsuba (for --mitsuba; it brings drjit), scipy (for
--integrated).
"""

import argparse
import math
import os
import platform
import random
import struct
import sys

import mpmath
from mpmath import mp, mpf, mpc

DIGITS = 50  # working precision of mpmath
OUT_DIGITS = 25  # significant digits written for mpmath values
TINY = mpf("1e-300")  # values below this are left out: they would be subnormal in f64

ROOT = os.path.normpath(os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", ".."))
DATA = os.path.join(ROOT, "tests", "data", "reference")

mp.dps = DIGITS


# --------------------------------------------------------------------------------------
# Formulas, straight from the papers, in mpmath. Inputs are Python floats, converted to
# mpf exactly (mpf(float) is exact), so the table's inputs are exactly the f64 values the
# Rust test reads back from their repr().
# --------------------------------------------------------------------------------------

def tan2(c):
    c = mpf(c)
    return (1 - c * c) / (c * c)


def mp_ggx_d(c, alpha):
    # Walter et al. 2007, GGX: D = alpha^2 / (pi (cos^2 (alpha^2 - 1) + 1)^2)
    c, a = mpf(c), mpf(alpha)
    return a**2 / (mp.pi * (c**2 * (a**2 - 1) + 1) ** 2)


def mp_ggx_aniso_d(c, t, b, ax, ay):
    # Heitz 2014, anisotropic GGX: D = 1 / (pi ax ay ((t/ax)^2 + (b/ay)^2 + c^2)^2)
    c, t, b, ax, ay = map(mpf, (c, t, b, ax, ay))
    return 1 / (mp.pi * ax * ay * ((t / ax) ** 2 + (b / ay) ** 2 + c**2) ** 2)


def mp_beckmann_d(c, alpha):
    # Walter et al. 2007, Beckmann: D = exp(-tan^2 / alpha^2) / (pi alpha^2 cos^4)
    c, a = mpf(c), mpf(alpha)
    return mp.exp(-tan2(c) / a**2) / (mp.pi * a**2 * c**4)


def mp_blinn_phong_d(c, p):
    # Blinn 1977 with Walter et al. 2007's normalisation: D = (p + 2) / (2 pi) cos^p
    c, p = mpf(c), mpf(p)
    return (p + 2) / (2 * mp.pi) * c**p


def mp_ggx_lambda(c, alpha):
    # Walter et al. 2007 / Heitz 2014: Lambda = (-1 + sqrt(1 + alpha^2 tan^2)) / 2
    return (-1 + mp.sqrt(1 + mpf(alpha) ** 2 * tan2(c))) / 2


def mp_ggx_g1(c, alpha):
    # Walter et al. 2007: G1 = 2 / (1 + sqrt(1 + alpha^2 tan^2))
    return 2 / (1 + mp.sqrt(1 + mpf(alpha) ** 2 * tan2(c)))


def mp_beckmann_lambda(c, alpha):
    # Walter et al. 2007: a = 1 / (alpha tan), Lambda = (erf(a) - 1)/2 + exp(-a^2)/(2 a sqrt(pi)).
    # erf(a) - 1 is written -erfc(a): at 50 digits, erf(a) for a = 25 would round to 1.
    if tan2(c) == 0:
        return mpf(0)  # normal incidence: the limit a -> infinity
    a = 1 / (mpf(alpha) * mp.sqrt(tan2(c)))
    return -mp.erfc(a) / 2 + mp.exp(-a * a) / (2 * a * mp.sqrt(mp.pi))


def mp_beckmann_g1(c, alpha):
    return 1 / (1 + mp_beckmann_lambda(c, alpha))


def mp_ggx_g2_hc(cv, cl, alpha):
    # Heitz 2014: G2 = 1 / (1 + Lambda(v) + Lambda(l))
    return 1 / (1 + mp_ggx_lambda(cv, alpha) + mp_ggx_lambda(cl, alpha))


def mp_ggx_v_hc(cv, cl, alpha):
    # V = G2 / (4 n.l n.v)
    return mp_ggx_g2_hc(cv, cl, alpha) / (4 * mpf(cv) * mpf(cl))


def mp_beckmann_g2_hc(cv, cl, alpha):
    return 1 / (1 + mp_beckmann_lambda(cv, alpha) + mp_beckmann_lambda(cl, alpha))


def mp_fresnel_dielectric(c, eta):
    # Fresnel's equations (Born and Wolf), unpolarised, via Snell's law; eta = n_t / n_i.
    ci, eta = mpf(c), mpf(eta)
    sin_t2 = (1 - ci * ci) / (eta * eta)
    if sin_t2 >= 1:
        return mpf(1)  # total internal reflection
    ct = mp.sqrt(1 - sin_t2)
    rs = (ci - eta * ct) / (ci + eta * ct)
    rp = (eta * ci - ct) / (eta * ci + ct)
    return (rs * rs + rp * rp) / 2


def mp_fresnel_conductor(c, n, k):
    # Fresnel's equations with a complex index eta = n + i k (Born and Wolf), via the
    # complex Snell's law: sin_t = sin_i / eta, cos_t = sqrt(1 - sin_t^2).
    ci = mpf(c)
    eta = mpc(n, k)
    sin_t2 = (1 - ci * ci) / (eta * eta)
    ct = mp.sqrt(1 - sin_t2)
    rs = (ci - eta * ct) / (ci + eta * ct)
    rp = (eta * ci - ct) / (eta * ci + ct)
    return (abs(rs) ** 2 + abs(rp) ** 2) / 2


def mp_burley(cv, cl, ldh, r):
    # Burley 2012: F_D90 = 0.5 + 2 r cos^2(theta_d),
    # f = (1/pi) (1 + (F_D90 - 1)(1 - n.l)^5) (1 + (F_D90 - 1)(1 - n.v)^5)
    cv, cl, ldh, r = map(mpf, (cv, cl, ldh, r))
    fd90 = mpf("0.5") + 2 * r * ldh * ldh
    return (1 + (fd90 - 1) * (1 - cl) ** 5) * (1 + (fd90 - 1) * (1 - cv) ** 5) / mp.pi


# --------------------------------------------------------------------------------------
# Sample points
# --------------------------------------------------------------------------------------

COS = [1.0, 0.9999999, 0.999999, 0.9999, 0.99, 0.95, 0.9, 0.8, 0.7, 0.5, 0.3, 0.1, 0.01, 1e-4]
ALPHA = [1e-3, 0.01, 0.05, 0.1, 0.2, 0.35, 0.5, 0.75, 1.0]
COS_PAIR = [1.0, 0.999, 0.9, 0.7, 0.5, 0.2, 0.05, 1e-3]
ALPHA_PAIR = [0.01, 0.1, 0.3, 0.6, 1.0]


def rng(name):
    # One fixed stream per table, so adding a table does not change the others.
    return random.Random("shadegate-refgen-" + name)


def uniform_cos(r):
    # cosines in (0, 1], with extra weight near both ends
    u = r.random()
    return 1.0 - u * u if r.random() < 0.5 else max(u, 1e-6)


def grid2(xs, ys):
    return [(x, y) for x in xs for y in ys]


def points_ndf(name):
    r = rng(name)
    pts = grid2(COS, ALPHA)
    pts += [(uniform_cos(r), r.uniform(1e-3, 1.0)) for _ in range(150)]
    return pts


def points_lambda(name):
    r = rng(name)
    pts = grid2([c for c in COS if c < 1.0], ALPHA)
    pts += [(uniform_cos(r), r.uniform(1e-3, 1.0)) for _ in range(150)]
    return pts


def points_pair(name):
    r = rng(name)
    pts = [(v, l, a) for v in COS_PAIR for l in COS_PAIR for a in ALPHA_PAIR]
    pts += [(uniform_cos(r), uniform_cos(r), r.uniform(1e-3, 1.0)) for _ in range(100)]
    return pts


def points_aniso(name):
    r = rng(name)
    pts = []
    alphas = [(0.1, 0.5), (0.5, 0.1), (0.05, 0.05), (0.3, 0.9), (1.0, 0.2)]
    for ax, ay in alphas:
        for _ in range(30):
            th = math.acos(uniform_cos(r))
            ph = r.uniform(0.0, 2.0 * math.pi)
            pts.append((math.cos(th), math.sin(th) * math.cos(ph), math.sin(th) * math.sin(ph), ax, ay))
    for _ in range(60):
        th = math.acos(uniform_cos(r))
        ph = r.uniform(0.0, 2.0 * math.pi)
        pts.append((math.cos(th), math.sin(th) * math.cos(ph), math.sin(th) * math.sin(ph),
                    r.uniform(0.01, 1.0), r.uniform(0.01, 1.0)))
    return pts


def points_blinn(name):
    r = rng(name)
    pts = grid2(COS, [0.0, 1.0, 2.0, 10.0, 50.0, 100.0, 1000.0, 10000.0])
    pts += [(uniform_cos(r), r.uniform(0.0, 2000.0)) for _ in range(100)]
    return pts


IORS = [1.0 / 2.42, 1.0 / 1.5, 1.0 / 1.33, 1.0001, 1.2, 1.33, 1.5, 1.8, 2.42, 4.0]


def points_dielectric(name):
    r = rng(name)
    cs = COS + [0.0, 0.75, 0.6, 0.4, 0.2]
    pts = grid2(cs, IORS)
    for eta in [1.0 / 1.5, 1.0 / 1.33]:
        crit = math.sqrt(1.0 - eta * eta)  # cosine of the critical angle
        for d in [1e-3, 1e-6, -1e-6, -1e-3]:
            pts.append((crit + d, eta))
    pts += [(r.random(), r.uniform(0.3, 4.0)) for _ in range(150)]
    return pts


# Complex indices of a few metals near 550 nm, from memory of handbook tables (Johnson and
# Christy 1972 for gold and copper, Rakic 1995 for aluminium): they only need to be
# metal-like here, the test compares formulas, not materials.
METALS = [(0.43, 2.45), (1.02, 2.58), (0.96, 6.69), (0.06, 3.59), (2.9, 3.08), (1.5, 0.0)]


def points_conductor(name):
    r = rng(name)
    cs = COS + [0.0, 0.75, 0.6, 0.4, 0.2]
    pts = [(c, n, k) for c in cs for (n, k) in METALS]
    pts += [(r.random(), r.uniform(0.05, 3.0), r.uniform(0.0, 10.0)) for _ in range(150)]
    return pts


def points_burley(name):
    r = rng(name)
    pts = []
    for cv in [1.0, 0.7, 0.3, 0.0]:
        for cl in [1.0, 0.5, 0.0]:
            for ldh in [1.0, 0.8, 0.3]:
                for rough in [0.0, 0.5, 1.0]:
                    pts.append((cv, cl, ldh, rough))
    pts += [(r.random(), r.random(), r.random(), r.random()) for _ in range(150)]
    return pts


# model name, parameter names, formula (for the header), points, function
MPMATH_TABLES = [
    ("ggx_ndf", ["n_dot_h", "alpha"], "GGX D, Walter et al. 2007", points_ndf, mp_ggx_d),
    ("ggx_aniso_ndf", ["n_dot_h", "t_dot_h", "b_dot_h", "alpha_x", "alpha_y"],
     "anisotropic GGX D, Heitz 2014", points_aniso, mp_ggx_aniso_d),
    ("beckmann_ndf", ["n_dot_h", "alpha"], "Beckmann D, Walter et al. 2007", points_ndf,
     mp_beckmann_d),
    ("blinn_phong_ndf", ["n_dot_h", "exponent"], "normalised Blinn-Phong D, Walter et al. 2007",
     points_blinn, mp_blinn_phong_d),
    ("smith_ggx_lambda", ["n_dot_v", "alpha"], "Smith Lambda for GGX, Heitz 2014",
     points_lambda, mp_ggx_lambda),
    ("smith_ggx_g1", ["n_dot_v", "alpha"], "Smith G1 for GGX, Walter et al. 2007", points_ndf,
     mp_ggx_g1),
    ("smith_beckmann_lambda", ["n_dot_v", "alpha"], "Smith Lambda for Beckmann (erf), Walter et al. 2007",
     points_lambda, mp_beckmann_lambda),
    ("smith_beckmann_g1", ["n_dot_v", "alpha"], "Smith G1 for Beckmann (erf), Walter et al. 2007",
     points_lambda, mp_beckmann_g1),
    ("smith_ggx_g2_height_correlated", ["n_dot_v", "n_dot_l", "alpha"],
     "height-correlated Smith G2 for GGX, Heitz 2014", points_pair, mp_ggx_g2_hc),
    ("smith_ggx_v_height_correlated", ["n_dot_v", "n_dot_l", "alpha"],
     "G2 / (4 n.l n.v), height-correlated Smith GGX, Heitz 2014", points_pair, mp_ggx_v_hc),
    ("smith_beckmann_g2_height_correlated", ["n_dot_v", "n_dot_l", "alpha"],
     "height-correlated Smith G2 for Beckmann, Heitz 2014", points_pair, mp_beckmann_g2_hc),
    ("fresnel_dielectric", ["v_dot_h", "ior"],
     "unpolarised dielectric Fresnel via Snell's law, Born and Wolf 1959", points_dielectric,
     mp_fresnel_dielectric),
    ("fresnel_conductor", ["v_dot_h", "ior", "k"],
     "unpolarised conductor Fresnel, complex Snell's law, Born and Wolf 1959", points_conductor,
     mp_fresnel_conductor),
    ("burley_diffuse", ["n_dot_v", "n_dot_l", "l_dot_h", "roughness"],
     "Burley diffuse, Burley 2012", points_burley, mp_burley),
]


# --------------------------------------------------------------------------------------
# Models added for the wider library (anisotropic masking, diffuse, sheen, clearcoat,
# Fresnel averages, encodings): closed forms, transcribed from the papers in the angle
# form where the papers use angles, at 50 digits.
# --------------------------------------------------------------------------------------

def mp_aniso_lambda(n, t, b, ax, ay):
    # Heitz 2014, section 5.2: Lambda = (-1 + sqrt(1 + alpha0^2 tan^2 theta)) / 2 with
    # alpha0^2 = cos^2 phi ax^2 + sin^2 phi ay^2, phi the azimuth of the direction in (t, b).
    n, t, b, ax, ay = map(mpf, (n, t, b, ax, ay))
    sin2 = t * t + b * b
    if sin2 == 0:
        return mpf(0)
    cos2phi, sin2phi = t * t / sin2, b * b / sin2
    alpha0_2 = cos2phi * ax * ax + sin2phi * ay * ay
    tan2 = sin2 / (n * n)
    return (-1 + mp.sqrt(1 + alpha0_2 * tan2)) / 2


def mp_aniso_g1(n, t, b, ax, ay):
    return 1 / (1 + mp_aniso_lambda(n, t, b, ax, ay))


def mp_aniso_g2_sep(nv, tv, bv, nl, tl, bl, ax, ay):
    return mp_aniso_g1(nv, tv, bv, ax, ay) * mp_aniso_g1(nl, tl, bl, ax, ay)


def mp_aniso_g2_hc(nv, tv, bv, nl, tl, bl, ax, ay):
    return 1 / (1 + mp_aniso_lambda(nv, tv, bv, ax, ay) + mp_aniso_lambda(nl, tl, bl, ax, ay))


def mp_aniso_v_sep(nv, tv, bv, nl, tl, bl, ax, ay):
    return mp_aniso_g2_sep(nv, tv, bv, nl, tl, bl, ax, ay) / (4 * mpf(nv) * mpf(nl))


def mp_aniso_v_hc(nv, tv, bv, nl, tl, bl, ax, ay):
    return mp_aniso_g2_hc(nv, tv, bv, nl, tl, bl, ax, ay) / (4 * mpf(nv) * mpf(nl))


def mp_oren_nayar(cv, cl, cphi, sigma, rho):
    # Oren and Nayar 1994, the full model: f = L1 + L2 per unit irradiance.
    tr, ti = mp.acos(mpf(cv)), mp.acos(mpf(cl))
    cphi, s2, rho = mpf(cphi), mpf(sigma) ** 2, mpf(rho)
    al, be = max(ti, tr), min(ti, tr)
    c1 = 1 - mpf("0.5") * s2 / (s2 + mpf("0.33"))
    if cphi >= 0:
        c2 = mpf("0.45") * s2 / (s2 + mpf("0.09")) * mp.sin(al)
    else:
        c2 = mpf("0.45") * s2 / (s2 + mpf("0.09")) * (mp.sin(al) - (2 * be / mp.pi) ** 3)
    c3 = mpf("0.125") * s2 / (s2 + mpf("0.09")) * (4 * al * be / mp.pi**2) ** 2
    l1 = rho / mp.pi * (c1 + cphi * c2 * mp.tan(be) + (1 - abs(cphi)) * c3 * mp.tan((al + be) / 2))
    l2 = mpf("0.17") * rho**2 / mp.pi * s2 / (s2 + mpf("0.13")) * (1 - cphi * (2 * be / mp.pi) ** 2)
    return l1 + l2


def mp_oren_nayar_q(cv, cl, cphi, sigma):
    # Oren and Nayar 1994, the qualitative model, unit albedo.
    tr, ti = mp.acos(mpf(cv)), mp.acos(mpf(cl))
    s2 = mpf(sigma) ** 2
    a = 1 - mpf("0.5") * s2 / (s2 + mpf("0.33"))
    b = mpf("0.45") * s2 / (s2 + mpf("0.09"))
    return (a + b * max(mpf(0), mpf(cphi)) * mp.sin(max(ti, tr)) * mp.tan(min(ti, tr))) / mp.pi


def mp_hammon(cv, cl, ch, lv, alpha, rho):
    # Hammon 2017 (constants from memory of the slides).
    cv, cl, ch, lv, a, rho = map(mpf, (cv, cl, ch, lv, alpha, rho))
    facing = mpf("0.5") + mpf("0.5") * lv
    rough = facing * (mpf("0.9") - mpf("0.4") * facing) * ((mpf("0.5") + ch) / ch)
    smooth = mpf("1.05") * (1 - (1 - cl) ** 5) * (1 - (1 - cv) ** 5)
    single = ((1 - a) * smooth + a * rough) / mp.pi
    return rho * (single + rho * mpf("0.1159") * a)


def mp_charlie(c, alpha):
    # Estevez and Kulla 2017: D = (2 + 1/alpha) sin^(1/alpha) theta / (2 pi)
    th = mp.acos(mpf(c))
    inv = 1 / mpf(alpha)
    return (2 + inv) * mp.sin(th) ** inv / (2 * mp.pi)


def mp_velvet(c, sigma):
    # Ashikhmin and Premoze 2007: D = (1 + 4 exp(-cot^2/s^2) / sin^4) / (pi (1 + 4 s^2))
    th = mp.acos(mpf(c))
    s = mpf(sigma)
    if mp.sin(th) == 0:
        return 1 / (mp.pi * (1 + 4 * s * s))
    return (1 + 4 * mp.exp(-mp.cot(th) ** 2 / s**2) / mp.sin(th) ** 4) / (mp.pi * (1 + 4 * s * s))


def mp_cloth_v(cv, cl):
    cv, cl = mpf(cv), mpf(cl)
    return 1 / (4 * (cl + cv - cl * cv))


def mp_charlie_lobe(ch, cv, cl, alpha):
    return mp_charlie(ch, alpha) * mp_cloth_v(cv, cl)


def mp_velvet_lobe(ch, cv, cl, sigma):
    return mp_velvet(ch, sigma) * mp_cloth_v(cv, cl)


def mp_gtr1(c, alpha):
    # Burley 2012, GTR with gamma = 1: D = (a^2 - 1) / (pi ln(a^2) (1 + (a^2 - 1) cos^2))
    c, a = mpf(c), mpf(alpha)
    if a == 1:
        return 1 / mp.pi
    return (a * a - 1) / (mp.pi * mp.log(a * a) * (1 + (a * a - 1) * c * c))


def mp_kelemen(ldh):
    return 1 / (4 * mpf(ldh) ** 2)


def mp_clearcoat_fresnel(c):
    # Schlick 1994 with F0 from the index 1.5: F0 = ((n - 1)/(n + 1))^2
    n = mpf("1.5")
    f0 = ((n - 1) / (n + 1)) ** 2
    return f0 + (1 - f0) * (1 - mpf(c)) ** 5


def mp_clearcoat_lobe(ch, ldh, alpha):
    return mp_gtr1(ch, alpha) * mp_kelemen(ldh) * mp_clearcoat_fresnel(ldh)


def mp_schlick_average(f0):
    # 2 int_0^1 F(mu) mu dmu by mpmath quadrature (not the closed form F0 + (1 - F0)/21).
    f0 = mpf(f0)
    return 2 * mp.quad(lambda mu: (f0 + (1 - f0) * (1 - mu) ** 5) * mu, [0, 1])


def mp_kc_fresnel_factor(favg, eavg):
    # Kulla and Conty 2017: F_ms = F_avg^2 E_avg / (1 - F_avg (1 - E_avg))
    favg, eavg = mpf(favg), mpf(eavg)
    return favg**2 * eavg / (1 - favg * (1 - eavg))


def mp_srgb_encode(x):
    # IEC 61966-2-1
    x = mpf(x)
    return 12.92 * x if x <= mpf("0.0031308") else mpf("1.055") * x ** (1 / mpf("2.4")) - mpf("0.055")


def mp_srgb_decode(x):
    x = mpf(x)
    return x / mpf("12.92") if x <= mpf("0.04045") else ((x + mpf("0.055")) / mpf("1.055")) ** mpf("2.4")


def mp_filmic(x):
    # Narkowicz 2015 (coefficients from memory): x (a x + b) / (x (c x + d) + e), saturated
    x = mpf(x)
    a, b, c, d, e = (mpf(s) for s in ("2.51", "0.03", "2.43", "0.59", "0.14"))
    return min(mpf(1), max(mpf(0), x * (a * x + b) / (x * (c * x + d) + e)))


def unit_frame_dir(r):
    th = math.acos(uniform_cos(r))
    ph = r.uniform(0.0, 2.0 * math.pi)
    return math.cos(th), math.sin(th) * math.cos(ph), math.sin(th) * math.sin(ph)


ANISO_ALPHAS = [(0.1, 0.5), (0.5, 0.1), (0.05, 0.05), (0.3, 0.9), (1.0, 0.2), (0.001, 0.01)]


def points_aniso_one(name):
    r = rng(name)
    pts = []
    for ax, ay in ANISO_ALPHAS:
        for _ in range(20):
            n, t, b = unit_frame_dir(r)
            pts.append((n, t, b, ax, ay))
    pts += [(1.0, 0.0, 0.0, 0.3, 0.7), (1e-4, math.sqrt(1 - 1e-8), 0.0, 0.3, 0.7)]
    return pts


def points_aniso_pair(name):
    r = rng(name)
    pts = []
    for ax, ay in ANISO_ALPHAS:
        for _ in range(20):
            pts.append(unit_frame_dir(r) + unit_frame_dir(r) + (ax, ay))
    pts.append((1.0, 0.0, 0.0, 1.0, 0.0, 0.0, 0.3, 0.7))
    return pts


def points_oren_nayar(name, with_rho):
    r = rng(name)
    pts = []
    for cv in [1.0, 0.7, 0.3, 0.01]:
        for cl in [1.0, 0.5, 0.05]:
            for cp in [1.0, 0.3, 0.0, -0.6, -1.0]:
                for s in [0.0, 0.3, 1.0]:
                    pts.append((cv, cl, cp, s) + ((0.7,) if with_rho else ()))
    for _ in range(100):
        p = (max(r.random(), 1e-3), max(r.random(), 1e-3), r.uniform(-1, 1), r.uniform(0, 1.5))
        pts.append(p + ((r.random(),) if with_rho else ()))
    return pts


def points_hammon(name):
    r = rng(name)
    pts = []
    for a in [0.0, 0.3, 1.0]:
        for cv, cl in [(1.0, 1.0), (0.5, 0.7), (0.1, 0.9), (0.0, 0.5)]:
            for ch in [1.0, 0.8, 0.3]:
                for lv in [1.0, 0.2, -0.5]:
                    pts.append((cv, cl, ch, lv, a, 0.8))
    pts += [(r.random(), r.random(), max(r.random(), 1e-3), r.uniform(-1, 1), r.random(), r.random())
            for _ in range(100)]
    return pts


def points_sheen_ndf(name, lo):
    r = rng(name)
    pts = grid2(COS + [0.0, 0.4, 0.2], [lo, 0.05, 0.1, 0.3, 0.5, 0.8, 1.0])
    pts += [(r.random(), r.uniform(lo, 1.0)) for _ in range(100)]
    return pts


def points_cloth_v(name):
    r = rng(name)
    cs = [1.0, 0.9, 0.5, 0.1, 1e-3]
    pts = [(v, l) for v in cs for l in cs]
    pts += [(uniform_cos(r), uniform_cos(r)) for _ in range(100)]
    return pts


def points_sheen_lobe(name, lo):
    r = rng(name)
    pts = [(uniform_cos(r), uniform_cos(r), uniform_cos(r), r.uniform(lo, 1.0)) for _ in range(150)]
    pts += [(0.5, 1.0, 1.0, 0.3), (0.0, 0.5, 0.5, 0.3), (1.0, 0.2, 0.3, 0.5)]
    return pts


def points_gtr1(name):
    r = rng(name)
    pts = grid2(COS + [0.0, 0.4], [0.001, 0.01, 0.05, 0.1, 0.5, 0.9, 0.999, 1.0])
    pts += [(uniform_cos(r), r.uniform(0.001, 1.0)) for _ in range(100)]
    return pts


def points_unit(name, lo=1e-3):
    r = rng(name)
    pts = [(c,) for c in [1.0, 0.99, 0.9, 0.7, 0.5, 0.3, 0.1, 0.01, lo]]
    pts += [(max(r.random(), lo),) for _ in range(100)]
    return pts


def points_clearcoat_lobe(name):
    r = rng(name)
    pts = [(uniform_cos(r), max(r.random(), 1e-2), r.uniform(0.001, 1.0)) for _ in range(150)]
    return pts


def points_fresnel_avg(name):
    r = rng(name)
    return [(x,) for x in [0.0, 0.02, 0.04, 0.5, 1.0]] + [(r.random(),) for _ in range(60)]


def points_kc_factor(name):
    r = rng(name)
    pts = grid2([0.05, 0.3, 0.7, 1.0], [0.4, 0.8, 0.99, 1.0])
    pts += [(r.uniform(1 / 21, 1.0), r.uniform(0.4, 1.0)) for _ in range(80)]
    return pts


def points_srgb(name, threshold):
    r = rng(name)
    pts = [(x,) for x in [0.0, 1e-6, threshold * 0.999, threshold, threshold * 1.001, 0.1, 0.5, 0.9, 1.0]]
    pts += [(r.random(),) for _ in range(100)]
    pts += [(r.random() * threshold * 2,) for _ in range(20)]
    return pts


def points_filmic(name):
    r = rng(name)
    pts = [(x,) for x in [0.0, 1e-6, 0.01, 0.18, 0.5, 1.0, 2.0, 7.0, 7.3, 10.0, 100.0]]
    pts += [(r.uniform(0.0, 12.0),) for _ in range(100)]
    return pts


ANISO_ONE = ["n_dot_v", "t_dot_v", "b_dot_v", "alpha_x", "alpha_y"]
ANISO_PAIR = ["n_dot_v", "t_dot_v", "b_dot_v", "n_dot_l", "t_dot_l", "b_dot_l", "alpha_x", "alpha_y"]

MPMATH_TABLES += [
    ("smith_ggx_aniso_lambda", ANISO_ONE, "anisotropic GGX Lambda (alpha0 form), Heitz 2014",
     points_aniso_one, mp_aniso_lambda),
    ("smith_ggx_aniso_g1", ANISO_ONE, "anisotropic GGX G1, Heitz 2014", points_aniso_one, mp_aniso_g1),
    ("smith_ggx_aniso_g2_separable", ANISO_PAIR, "anisotropic GGX separable G2, Heitz 2014",
     points_aniso_pair, mp_aniso_g2_sep),
    ("smith_ggx_aniso_g2_height_correlated", ANISO_PAIR,
     "anisotropic GGX height-correlated G2, Heitz 2014", points_aniso_pair, mp_aniso_g2_hc),
    ("smith_ggx_aniso_v_separable", ANISO_PAIR, "G2 / (4 n.v n.l), separable, Heitz 2014",
     points_aniso_pair, mp_aniso_v_sep),
    ("smith_ggx_aniso_v_height_correlated", ANISO_PAIR,
     "G2 / (4 n.v n.l), height-correlated, Heitz 2014", points_aniso_pair, mp_aniso_v_hc),
    ("oren_nayar_diffuse", ["n_dot_v", "n_dot_l", "cos_phi", "sigma", "rho"],
     "Oren-Nayar full model, Oren and Nayar 1994", lambda n: points_oren_nayar(n, True), mp_oren_nayar),
    ("oren_nayar_qualitative", ["n_dot_v", "n_dot_l", "cos_phi", "sigma"],
     "Oren-Nayar qualitative model, Oren and Nayar 1994", lambda n: points_oren_nayar(n, False),
     mp_oren_nayar_q),
    ("hammon_diffuse", ["n_dot_v", "n_dot_l", "n_dot_h", "l_dot_v", "alpha", "rho"],
     "GGX diffuse approximation, Hammon 2017", points_hammon, mp_hammon),
    ("charlie_sheen_ndf", ["n_dot_h", "alpha"], "Charlie sheen D, Estevez and Kulla 2017",
     lambda n: points_sheen_ndf(n, 0.01), mp_charlie),
    ("ashikhmin_velvet_ndf", ["n_dot_h", "sigma"], "velvet D, Ashikhmin and Premoze 2007",
     lambda n: points_sheen_ndf(n, 0.01), mp_velvet),
    ("sheen_visibility", ["n_dot_v", "n_dot_l"], "cloth visibility, Ashikhmin and Premoze 2007",
     points_cloth_v, mp_cloth_v),
    ("sheen_charlie_lobe", ["n_dot_h", "n_dot_v", "n_dot_l", "alpha"], "Charlie D times cloth V",
     lambda n: points_sheen_lobe(n, 0.01), mp_charlie_lobe),
    ("sheen_velvet_lobe", ["n_dot_h", "n_dot_v", "n_dot_l", "sigma"], "velvet D times cloth V",
     lambda n: points_sheen_lobe(n, 0.01), mp_velvet_lobe),
    ("gtr1_ndf", ["n_dot_h", "alpha"], "GTR1 (Berry) D, Burley 2012", points_gtr1, mp_gtr1),
    ("kelemen_visibility", ["l_dot_h"], "Kelemen and Szirmay-Kalos 2001", points_unit, mp_kelemen),
    ("clearcoat_fresnel", ["v_dot_h"], "Schlick 1994 at F0 from IOR 1.5",
     lambda n: points_unit(n, 0.0), mp_clearcoat_fresnel),
    ("clearcoat_lobe", ["n_dot_h", "l_dot_h", "alpha"], "GTR1 D times Kelemen V times F",
     points_clearcoat_lobe, mp_clearcoat_lobe),
    ("schlick_fresnel_average", ["f0"], "2 int F_Schlick(mu) mu dmu by mpmath quadrature",
     points_fresnel_avg, mp_schlick_average),
    ("kulla_conty_fresnel_factor", ["f_avg", "e_avg"], "Kulla and Conty 2017", points_kc_factor,
     mp_kc_fresnel_factor),
    ("srgb_encode", ["x"], "IEC 61966-2-1", lambda n: points_srgb(n, 0.0031308), mp_srgb_encode),
    ("srgb_decode", ["x"], "IEC 61966-2-1", lambda n: points_srgb(n, 0.04045), mp_srgb_decode),
    ("filmic_tonemap", ["x"], "fitted filmic curve, Narkowicz 2015", points_filmic, mp_filmic),
]


# --------------------------------------------------------------------------------------
# Integrated models: the directional albedo of the GGX lobe and the split-sum terms, by
# scipy's QUADPACK (dblquad) over the light direction l in spherical coordinates, with
# h = normalize(v + l): a different variable, a different rule and a different code from
# the Rust quadrature (which integrates over h with Gauss-Legendre). Written with 12
# significant digits, so that a different scipy build cannot change the text.
#
# Accuracy of this integration, as measured while writing it: against mpmath's tanh-sinh
# quadrature at 20 digits (the same integrand, 35 to 85 s per point) at (mu, alpha) =
# (0.5, 0.3), (0.1, 0.04), (1, 1), (0.3, 0.01) the two agree to 1e-16, 4e-14, 0, 8e-14;
# and at alpha = 1 it matches the closed form 1 - mu ln(1 + 1/mu) (checked in the tests).
# --------------------------------------------------------------------------------------

INT_DIGITS = 12
INT_EPS = 1e-12


def sp_lobe(mu, alpha, weight):
    from scipy import integrate

    a = alpha
    sv = math.sqrt((1.0 - mu) * (1.0 + mu))
    rv = math.sqrt(mu * mu + a * a * (1.0 - mu * mu))

    def f(ph, th):
        st, ct = math.sin(th), math.cos(th)
        hx, hy, hz = sv + st * math.cos(ph), st * math.sin(ph), mu + ct
        hn = math.sqrt(hx * hx + hy * hy + hz * hz)
        c, vh = hz / hn, (sv * hx + mu * hz) / hn
        d = a * a / (math.pi * (c * c * (a * a - 1.0) + 1.0) ** 2)  # GGX, Walter et al. 2007
        v = 0.5 / (ct * rv + mu * math.sqrt(ct * ct + a * a * (1.0 - ct * ct)))  # Heitz 2014
        return d * v * weight(vh) * ct * st

    tv = math.acos(mu)
    total = 0.0
    # symmetric about the plane of v: phi in (0, pi), doubled; breaks at the mirror direction
    for t0, t1 in [(0.0, tv), (tv, math.pi / 2)]:
        if t1 <= t0:
            continue
        for p0, p1 in [(0.0, math.pi / 2), (math.pi / 2, math.pi)]:
            r, _ = integrate.dblquad(f, t0, t1, p0, p1, epsabs=INT_EPS, epsrel=INT_EPS)
            total += r
    return 2.0 * total


def sp_albedo(mu, alpha):
    return sp_lobe(mu, alpha, lambda vh: 1.0)


def sp_scale(mu, roughness):
    return sp_lobe(mu, roughness * roughness, lambda vh: 1.0 - (1.0 - vh) ** 5)


def sp_bias(mu, roughness):
    return sp_lobe(mu, roughness * roughness, lambda vh: (1.0 - vh) ** 5)


def points_albedo(name):
    r = rng(name)
    # n.v = 0 is left out: the lobe then peaks at a corner of the integration domain (the
    # horizon) and dblquad misses part of it for narrow lobes (0.9922 at alpha = 0.01 where
    # the value is 1: see tests/reference/integrated.rs, albedo_edges).
    pts = grid2([1.0, 0.75, 0.5, 0.25, 0.1, 0.01], [0.01, 0.04, 0.1, 0.3, 0.6, 1.0])
    pts += [(r.random(), r.uniform(0.02, 1.0)) for _ in range(18)]
    return pts


def points_split_sum(name):
    r = rng(name)
    pts = grid2([1.0, 0.75, 0.5, 0.25, 0.1, 0.02], [0.1, 0.25, 0.5, 0.75, 1.0])
    pts += [(r.uniform(0.02, 1.0), r.uniform(0.1, 1.0)) for _ in range(21)]
    return pts


INTEGRATED_TABLES = [
    ("ggx_albedo", ["n_dot_v", "alpha"], "E(mu, alpha) of GGX with height-correlated Smith, F = 1",
     points_albedo, sp_albedo),
    ("split_sum_scale", ["n_dot_v", "roughness"], "split-sum scale, Karis 2013, height-correlated Smith",
     points_split_sum, sp_scale),
    ("split_sum_bias", ["n_dot_v", "roughness"], "split-sum bias, Karis 2013, height-correlated Smith",
     points_split_sum, sp_bias),
]


def build_integrated():
    import scipy

    files = {}
    versions = "scipy %s, Python %s, dblquad epsabs = epsrel = %g, %d significant digits" % (
        scipy.__version__, platform.python_version(), INT_EPS, INT_DIGITS)
    for name, params, formula, points, fn in INTEGRATED_TABLES:
        rows = [",".join(fmt_float(x) for x in p) + "," + ("%.*g" % (INT_DIGITS, fn(*p)))
                for p in points(name)]
        head = [
            "# generated by tools/refgen/refgen.py --integrated (%s)" % versions,
            "# model: %s; %s" % (name, formula),
            "# %d rows" % len(rows),
            ",".join(params + ["expected"]),
        ]
        files[os.path.join("integrated", name + ".csv")] = "\n".join(head + rows) + "\n"
    return files


def fmt_float(x):
    return repr(float(x))


def build_mpmath():
    files = {}
    versions = "mpmath %s, Python %s, %d significant digits" % (
        mpmath.__version__, platform.python_version(), DIGITS)
    for name, params, formula, points, fn in MPMATH_TABLES:
        rows = []
        skipped = 0
        for p in points(name):
            value = fn(*p)
            if value != 0 and abs(value) < TINY:
                skipped += 1
                continue
            rows.append(",".join(fmt_float(x) for x in p) + "," + mpmath.nstr(value, OUT_DIGITS))
        head = [
            "# generated by tools/refgen/refgen.py --mpmath (%s)" % versions,
            "# model: %s; %s" % (name, formula),
            "# %d rows; %d points left out because the value is below 1e-300" % (len(rows), skipped),
            ",".join(params + ["expected"]),
        ]
        files[os.path.join("mpmath", name + ".csv")] = "\n".join(head + rows) + "\n"
    return files


# --------------------------------------------------------------------------------------
# Mitsuba 3, scalar_rgb (single precision). Inputs are rounded to f32 first, so the table
# records exactly the numbers Mitsuba computed with.
# --------------------------------------------------------------------------------------

def f32(x):
    return struct.unpack("f", struct.pack("f", x))[0]


def build_mitsuba():
    import drjit as dr
    import mitsuba as mi

    mi.set_variant("scalar_rgb")
    versions = "mitsuba %s, drjit %s, variant scalar_rgb, Python %s" % (
        mi.__version__, dr.__version__, platform.python_version())

    def local_dir(c):
        # unit vector at cosine c from the local z axis (Mitsuba's shading normal)
        c = f32(c)
        return c, mi.Vector3f(f32(math.sqrt(max(0.0, 1.0 - c * c))), 0.0, c)

    def cos_f32(r):
        return f32(min(1.0, max(0.02, uniform_cos(r))))

    tables = []

    # Mitsuba's microfacet alpha is the same width parameter as Walter et al.'s (and ours):
    # D(m) = alpha^2 / (pi (...)^2) for GGX, exp(-tan^2/alpha^2) / (pi alpha^2 cos^4) for
    # Beckmann. It is not perceptual roughness, so no remapping is applied.
    def ndf_table(name, mtype, label, max_exponent):
        r = rng("mitsuba-" + name)
        rows = []
        while len(rows) < 200:
            c = cos_f32(r)
            a = f32(r.uniform(0.02, 1.0))
            if mtype == mi.MicrofacetType.Beckmann and tan2(c) / a**2 > max_exponent:
                continue  # keep exp()'s argument moderate, see the test's tolerance
            c, m = local_dir(c)
            d = mi.MicrofacetDistribution(mtype, a, False).eval(m)
            rows.append((c, a, d))
        tables.append((name, ["n_dot_h", "alpha"], label, rows))

    ndf_table("ggx_ndf", mi.MicrofacetType.GGX, "MicrofacetDistribution(GGX, alpha).eval(m)", None)
    ndf_table("beckmann_ndf", mi.MicrofacetType.Beckmann,
              "MicrofacetDistribution(Beckmann, alpha).eval(m); exp argument <= 8", 8)

    r = rng("mitsuba-ggx_aniso_ndf")
    rows = []
    for _ in range(200):
        th = math.acos(cos_f32(r))
        ph = r.uniform(0.0, 2.0 * math.pi)
        t, b, c = f32(math.sin(th) * math.cos(ph)), f32(math.sin(th) * math.sin(ph)), f32(math.cos(th))
        ax, ay = f32(r.uniform(0.05, 1.0)), f32(r.uniform(0.05, 1.0))
        d = mi.MicrofacetDistribution(mi.MicrofacetType.GGX, ax, ay, False).eval(mi.Vector3f(t, b, c))
        rows.append((c, t, b, ax, ay, d))
    tables.append(("ggx_aniso_ndf", ["n_dot_h", "t_dot_h", "b_dot_h", "alpha_x", "alpha_y"],
                   "MicrofacetDistribution(GGX, alpha_u, alpha_v).eval(m), m = (t, b, n)", rows))

    # smith_g1(v, m) with m = the normal, so the microfacet-side test always passes.
    normal = mi.Vector3f(0.0, 0.0, 1.0)
    for name, mtype, label in [
        ("smith_ggx_g1", mi.MicrofacetType.GGX, "MicrofacetDistribution(GGX, alpha).smith_g1(v, n)"),
        # Mitsuba's Beckmann smith_g1 is Walter's rational approximation, so it is compared
        # with the rational variant, not with the exact erf form.
        ("smith_beckmann_g1_rational", mi.MicrofacetType.Beckmann,
         "MicrofacetDistribution(Beckmann, alpha).smith_g1(v, n)"),
    ]:
        r = rng("mitsuba-" + name)
        rows = []
        for _ in range(200):
            c, v = local_dir(cos_f32(r))
            a = f32(r.uniform(0.02, 1.0))
            g = mi.MicrofacetDistribution(mtype, a, False).smith_g1(v, normal)
            rows.append((c, a, g))
        tables.append((name, ["n_dot_v", "alpha"], label, rows))

    r = rng("mitsuba-smith_ggx_g2_separable")
    rows = []
    for _ in range(200):
        cv, v = local_dir(cos_f32(r))
        cl, l = local_dir(cos_f32(r))
        l = mi.Vector3f(-l[0], 0.0, l[2])
        a = f32(r.uniform(0.02, 1.0))
        g = mi.MicrofacetDistribution(mi.MicrofacetType.GGX, a, False).G(v, l, normal)
        rows.append((cv, cl, a, g))
    tables.append(("smith_ggx_g2_separable", ["n_dot_v", "n_dot_l", "alpha"],
                   "MicrofacetDistribution(GGX, alpha).G(v, l, n)", rows))

    r = rng("mitsuba-fresnel_dielectric")
    rows = []
    while len(rows) < 200:
        c = f32(r.random())
        eta = f32(r.choice([1.0 / 1.5, 1.0 / 1.33, 1.33, 1.5, 2.42, r.uniform(0.3, 4.0)]))
        g2 = eta * eta - 1.0 + c * c
        if abs(g2) < 1e-2:
            continue  # within reach of the critical angle, where F has an infinite slope
        rows.append((c, eta, mi.fresnel(c, eta)[0]))
    tables.append(("fresnel_dielectric", ["v_dot_h", "ior"], "fresnel(cos_theta_i, eta)[0]", rows))

    r = rng("mitsuba-fresnel_conductor")
    rows = []
    for i in range(200):
        c = f32(max(r.random(), 1e-3))
        if i < 60:
            n, k = METALS[i % len(METALS)]
            n, k = f32(n), f32(k)
        else:
            n, k = f32(r.uniform(0.05, 3.0)), f32(r.uniform(0.0, 10.0))
        rows.append((c, n, k, mi.fresnel_conductor(c, dr.scalar.Complex2f(n, k))))
    tables.append(("fresnel_conductor", ["v_dot_h", "ior", "k"],
                   "fresnel_conductor(cos_theta_i, Complex2f(ior, k))", rows))

    files = {}
    for name, params, label, rows in tables:
        head = [
            "# generated by tools/refgen/refgen.py --mitsuba (%s)" % versions,
            "# model: %s; Mitsuba %s, computed in f32; inputs are the f32 values it saw" % (name, label),
            "# %d rows" % len(rows),
            ",".join(params + ["expected"]),
        ]
        body = [",".join(fmt_float(x) for x in row) for row in rows]
        files[os.path.join("mitsuba", name + ".csv")] = "\n".join(head + body) + "\n"
    return files


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--mpmath", action="store_true", help="generate the mpmath tables")
    ap.add_argument("--mitsuba", action="store_true", help="generate the Mitsuba 3 tables")
    ap.add_argument("--integrated", action="store_true",
                    help="generate the integrated-model tables (scipy)")
    ap.add_argument("--check", action="store_true",
                    help="compare with the committed tables instead of writing them")
    args = ap.parse_args()
    if not args.mpmath and not args.mitsuba and not args.integrated:
        args.mpmath = args.mitsuba = args.integrated = True

    files = {}
    if args.mpmath:
        files.update(build_mpmath())
    if args.mitsuba:
        files.update(build_mitsuba())
    if args.integrated:
        files.update(build_integrated())

    if args.check:
        bad = []
        for rel, text in sorted(files.items()):
            path = os.path.join(DATA, rel)
            try:
                with open(path, encoding="utf-8") as f:
                    old = f.read()
            except FileNotFoundError:
                bad.append(rel)
                continue
            old_first, _, old_rest = old.partition("\n")
            new_first, _, new_rest = text.partition("\n")
            if old_rest != new_rest:
                bad.append(rel)
            elif old_first != new_first:
                print("refgen: note: tests/data/reference/%s was generated with different versions:"
                      "\n  committed: %s\n  this run:  %s" % (rel, old_first, new_first), file=sys.stderr)
        for rel in bad:
            print("refgen: tests/data/reference/%s differs from a fresh run" % rel, file=sys.stderr)
        if bad:
            print("refgen: regenerate with: python3 tools/refgen/refgen.py", file=sys.stderr)
            return 1
        print("refgen: %d tables match" % len(files))
        return 0

    for rel, text in sorted(files.items()):
        path = os.path.join(DATA, rel)
        os.makedirs(os.path.dirname(path), exist_ok=True)
        tmp = path + ".tmp"
        with open(tmp, "w", encoding="utf-8", newline="\n") as f:
            f.write(text)
        os.replace(tmp, path)
        print("refgen: wrote tests/data/reference/%s" % rel)
    return 0


if __name__ == "__main__":
    sys.exit(main())
