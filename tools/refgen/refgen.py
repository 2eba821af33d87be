#!/usr/bin/env python3
"""Reference tables for shadegate's f64 shading models, from two outside sources.

  --mpmath   the published formulas evaluated with mpmath at 50 significant digits
             (written straight from the papers, independent of the Rust code), into
             tests/data/reference/mpmath/<model>.csv
  --mitsuba  the same quantities from the Mitsuba 3 renderer (variant scalar_rgb, which
             computes in single precision), into tests/data/reference/mitsuba/<model>.csv
  --check    regenerate in memory and compare with the committed files; exit 1 on any
             difference in the data. The first line (generator and versions) is left out
             of the comparison and only reported when it differs, so that a different
             Python or library version fails only if it changes a value.

With neither --mpmath nor --mitsuba, both are generated. Each file is named after the
registry model it checks (harness/reference/mod.rs); its columns are that model's
parameters in order, then `expected`. Lines starting with '#' are comments: the first
names the generator and the library versions.

Packages: mpmath (for --mpmath), mitsuba (for --mitsuba; it brings drjit).
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
    ap.add_argument("--check", action="store_true",
                    help="compare with the committed tables instead of writing them")
    args = ap.parse_args()
    if not args.mpmath and not args.mitsuba:
        args.mpmath = args.mitsuba = True

    files = {}
    if args.mpmath:
        files.update(build_mpmath())
    if args.mitsuba:
        files.update(build_mitsuba())

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
