"""Independent evaluation of radnorm's default R model and its hadronic Delta alpha (scipy 1.14).

Re-implements the model from its documentation (src/rmodel/*.rs) and the parameters in
tables/resonances.toml, with its own alpha_s (scipy solve_ivp) and its own dispersion
integral (scipy.integrate.quad on the plain spacelike integrand, no pole subtraction, no
tabulation). The Breit-Wigners' bare parameters (electronic width in keV, mass and width in
GeV) are passed in by the test, because undressing them needs the timelike Pi at each mass,
a separate step tested elsewhere.

Arguments: q2 (spacelike, GeV^2) followed by `name=gamma_ee_bare_kev:mass_gev:width_gev`.
Prints `smooth value` (and `smooth_<region> value` for the pi pi, inclusive and pQCD shares),
`bw value` and `r_<sqrt_s> value` lines.
"""
import math
import sys
import tomllib
from pathlib import Path

import warnings

from scipy.integrate import quad, solve_ivp

warnings.filterwarnings("ignore")

ALPHA = 1 / 137.035999177
P = tomllib.loads((Path(__file__).parents[2] / "tables/resonances.toml").read_text())
TH = P["thresholds"]
MPI = TH["m_pi_charged_gev"]
STH = 4 * MPI**2
Z3 = 1.2020569031595942


def beta(nf):
    return [(11 - 2 * nf / 3) / 4, (102 - 38 * nf / 3) / 16,
            (2857 / 2 - 5033 * nf / 18 + 325 * nf**2 / 54) / 64,
            (149753 / 6 + 3564 * Z3 - (1078361 / 162 + 6508 * Z3 / 27) * nf
             + (50065 / 162 + 6472 * Z3 / 81) * nf**2 + 1093 * nf**3 / 729) / 256]


def solution(a0, t0, t1, nf):
    b = beta(nf)
    f = lambda t, a: [-a[0] ** 2 * (b[0] + a[0] * (b[1] + a[0] * (b[2] + a[0] * b[3])))]
    return solve_ivp(f, (t0, t1), [a0], rtol=1e-12, atol=1e-15, dense_output=True).sol


tz, tc, tb = (math.log(m * m) for m in (91.1880, TH["m_c_msbar_gev"], TH["m_b_msbar_gev"]))
S5 = solution(0.118 / math.pi, tz, math.log(1e13), 5)
S5d = solution(0.118 / math.pi, tz, tb, 5)
S4 = solution(S5d(tb)[0], tb, tc, 4)
S3 = solution(S4(tc)[0], tc, math.log(0.8), 3)


def a_s(s):
    t = math.log(min(max(s, 0.8), 1e13))
    if t >= tz:
        return S5(t)[0]
    if t >= tb:
        return S5d(t)[0]
    return S4(t)[0] if t >= tc else S3(t)[0]


def vfac(s, m):
    y = 4 * m * m / s
    if y >= 1:
        return 0.0
    v = math.sqrt(1 - y)
    return 0.5 * v * (3 - v * v)


def r_pqcd(s, heavy):
    a = a_s(s)
    w = [1, 1, 1, 0, 0]
    if heavy:
        for i, (mq, mo) in ((3, (TH["m_c_msbar_gev"], TH["m_d0_gev"])),
                            (4, (TH["m_b_msbar_gev"], TH["m_b_charged_gev"]))):
            t = min(max((math.sqrt(s) - 2 * mo) / 0.2, 0), 1)
            w[i] = t * t * (3 - 2 * t) * vfac(s, mq)
    q = [2 / 3, -1 / 3, -1 / 3, 2 / 3, -1 / 3]
    nf = sum(w)
    sq2 = sum(qi * qi * wi for qi, wi in zip(q, w))
    sq = sum(qi * wi for qi, wi in zip(q, w))
    r2 = 1.9857 - 0.1152 * nf
    r3 = -6.63694 - 1.20013 * nf - 0.00518 * nf * nf
    return 3 * sq2 * (1 + a + r2 * a * a + r3 * a**3) - 1.2395 * sq * sq * a**3


def kk(s):
    return 0.5 * math.sqrt(max(s - 4 * MPI**2, 0))


def hh(s):
    e, k = math.sqrt(s), kk(s)
    return 2 / math.pi * k / e * math.log((e + 2 * k) / (2 * MPI))


def gs(s, m, g):
    km, hm = kk(m * m), hh(m * m)
    dh = hm * (1 / (8 * km * km) - 1 / (2 * m * m)) + 1 / (2 * math.pi * m * m)
    d = (3 / math.pi * MPI**2 / km**2 * math.log((m + 2 * km) / (2 * MPI))
         + m / (2 * math.pi * km) - MPI**2 * m / (math.pi * km**3))
    k = kk(s)
    f = g * m * m / km**3 * (k * k * (hh(s) - hm) + (m * m - s) * km * km * dh)
    width = g * m / math.sqrt(s) * (k / km) ** 3
    return m * m * (1 + d * g / m) / complex(m * m - s + f, -m * width)


OM = [r for r in P["resonance"] if r["name"] == "omega"][0]
RHO = P["rho"]


def r_pipi(s):
    if s <= STH:
        return 0.0
    mw2 = OM["mass_gev"] ** 2
    bw_w = mw2 / complex(mw2 - s, -OM["mass_gev"] * OM["width_gev"])
    dl = RHO["omega_mixing"]
    rho = gs(s, RHO["mass_gev"], RHO["width_gev"]) * (1 + dl * s / mw2 * bw_w) / (1 + dl)
    f = (rho + RHO["prime_weight"] * gs(s, RHO["prime_mass_gev"], RHO["prime_width_gev"])) / (
        1 + RHO["prime_weight"])
    b = math.sqrt(1 - STH / s)
    return 0.25 * b**3 * abs(f) ** 2


def r_parts(s):
    """R_smooth split by region as the model documents it: (pi pi, inclusive, pQCD)."""
    if s <= STH:
        return 0.0, 0.0, 0.0
    e = math.sqrt(s)
    if e >= 2.0:
        return 0.0, 0.0, r_pqcd(s, True)
    t = min(max((e - 1.0) / 0.6, 0), 1)
    w = t * t * (3 - 2 * t)
    return (1 - w) * r_pipi(s), (w * r_pqcd(s, False) if w > 0 else 0.0), 0.0


def r_smooth(s):
    return sum(r_parts(s))


q2 = float(sys.argv[1])
bare = {k: [float(x) for x in v.split(":")] for k, v in (a.split("=") for a in sys.argv[2:])}
edges = sorted({STH, 1.0, 1.6**2, TH["m_c_msbar_gev"] ** 2, 4.0, TH["m_b_msbar_gev"] ** 2,
                (2 * TH["m_d0_gev"]) ** 2, (2 * TH["m_d0_gev"] + 0.2) ** 2,
                (2 * TH["m_b_charged_gev"]) ** 2, (2 * TH["m_b_charged_gev"] + 0.2) ** 2,
                RHO["mass_gev"] ** 2, OM["mass_gev"] ** 2, 1e2, 1e3, 1e4, 1e6, 1e8, 1e10, 1e12})
kernel = lambda s, r: r(s) / (s * (s - q2))


def smooth_delta_alpha(r):
    total = 0.0
    for lo, hi in zip(edges, edges[1:]):
        pts = [OM["mass_gev"] ** 2 + k * OM["mass_gev"] * OM["width_gev"]
               for k in (-3, -1, 0, 1, 3)]
        pts = [p for p in pts if lo < p < hi] or None
        total += quad(kernel, lo, hi, args=(r,), points=pts, limit=1000,
                      epsabs=0, epsrel=1e-12)[0]
    total += quad(lambda u: r(1e12 / u) / (1e12 - q2 * u), 0, 1, epsabs=0, epsrel=1e-12)[0]
    return -ALPHA * q2 / (3 * math.pi) * total


print(f"smooth {smooth_delta_alpha(r_smooth):.15e}")
# Each region's share on its own (the parts jump at 2 GeV, an edge above).
for i, name in enumerate(("pipi", "inclusive", "pqcd")):
    print(f"smooth_{name} {smooth_delta_alpha(lambda s, i=i: r_parts(s)[i]):.15e}")
bw = 0.0
for r in P["resonance"]:
    gee, m, g = bare[r["name"]]
    k = 9 / ALPHA**2 * gee * 1e-6 * g * (1 - r["exclude_fraction"])
    # s = M^2 + M Gamma tan(theta) maps the Lorentzian to a smooth integrand over (0, inf):
    # R_V ds / (s (s - q2)) = K dtheta / (M Gamma (s - q2)).
    th0 = math.atan(-m / g)
    val = quad(lambda th: k / (m * g * (m * m + m * g * math.tan(th) - q2)), th0, math.pi / 2,
               points=[th0 / 2, 0.0, 1.0, 1.5, 1.57],
               limit=1000, epsabs=0, epsrel=1e-13)[0]
    bw += -ALPHA * q2 / (3 * math.pi) * val
print(f"bw {bw:.15e}")
for e in (0.5, 0.775, 1.3, 2.5, 4.0, 12.0):
    print(f"r_{e} {r_smooth(e * e):.15e}")
