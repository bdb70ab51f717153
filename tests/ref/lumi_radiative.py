"""Independent σ_vis of Bhabha scattering with leading-log structure functions (scipy).

Same formulas as radnorm's lumi layer, evaluated independently: the lab four-vectors are built
by an explicit boost, the cuts are applied to them, the accepted hard-angle intervals are found
by root finding on a continuous margin function, the textbook Born dσ/dΩ
(α²/2s)[(s²+u²)/t² + 2u²/(st) + (t²+u²)/s²] (Peskin & Schroeder problem 5.2) is integrated
over them with a 48-point Gauss-Legendre rule (numpy), and the two beams' structure functions
D(z) = (β/2)(1−z)^(β/2−1)(1+3β/8) − (β/4)(1+z) with scipy dblquad after t = (1−z)^(β/2).
Bare tracks: each lepton's energy is multiplied by an FSR fraction y with the same D, so the
energy cut passes with probability ∫_{E_min/E}^1 D(y) dy (quad with the 'alg' weight).

usage: lumi_radiative.py sqrt_s theta_min theta_max acol_max e_min beta mode(calo|bare)
prints: sigma_nb <value>, lnt_mean <value>
"""
import math
import sys
import warnings
warnings.simplefilter("ignore")
import numpy as np
from scipy import integrate, optimize

ALPHA = 1 / 137.035999177
GEV2_NB = 0.3893793721e6

sqrt_s, th_min, th_max, acol_max, e_min, beta = map(float, sys.argv[1:7])
mode = sys.argv[7]
s = sqrt_s**2


def born(shat, c):
    t = -0.5 * shat * (1 - c)
    u = -0.5 * shat * (1 + c)
    return 2 * np.pi * ALPHA**2 / (2 * shat) * ((shat**2 + u**2) / t**2 + 2 * u**2 / (shat * t) + (t**2 + u**2) / shat**2) * GEV2_NB


def lab(z1, z2, c):
    """Lab polar angles (deg), acollinearity (deg), energies (fraction of E_beam)."""
    E = math.sqrt(z1 * z2)  # each particle's energy in the hard frame, units of E_beam
    pz_cm = E * c
    pt = E * math.sqrt(max(1 - c * c, 0.0))
    # boost with velocity b along +z
    b = (z1 - z2) / (z1 + z2)
    g = 1 / math.sqrt(1 - b * b)
    pz1, e1 = g * (pz_cm + b * E), g * (E + b * pz_cm)
    pz2, e2 = g * (-pz_cm + b * E), g * (E - b * pz_cm)
    th1 = math.degrees(math.atan2(pt, pz1))
    th2 = math.degrees(math.atan2(pt, pz2))
    cosang = (-pt * pt + pz1 * pz2) / (e1 * e2)
    acol = 180 - math.degrees(math.acos(min(max(cosang, -1.0), 1.0)))
    return th1, th2, acol, e1, e2


def margin(z1, z2, c):
    th1, th2, acol, e1, e2 = lab(z1, z2, c)
    return min(th1 - th_min, th_max - th1, th2 - th_min, th_max - th2,
               acol_max - acol, 50 * (e1 - e_min), 50 * (e2 - e_min))


GL_X, GL_W = np.polynomial.legendre.leggauss(48)


def keep(y0, b):
    if y0 >= 1:
        return 0.0
    y0 = max(y0, 0.0)
    soft, _ = integrate.quad(lambda y: 0.5 * b * (1 + 3 * b / 8), y0, 1, weight='alg', wvar=(0, 0.5 * b - 1))
    hard, _ = integrate.quad(lambda y: -0.25 * b * (1 + y), y0, 1)
    return soft + hard


def inner(z1, z2):
    grid = np.linspace(-1 + 1e-12, 1 - 1e-12, 201)
    m = [margin(z1, z2, c) for c in grid]
    edges = []
    for i in range(len(grid) - 1):
        if (m[i] >= 0) != (m[i + 1] >= 0):
            edges.append(optimize.brentq(lambda c: margin(z1, z2, c), grid[i], grid[i + 1], xtol=1e-14))
    pts = [grid[0]] + edges + [grid[-1]]
    shat = z1 * z2 * s
    total = 0.0
    for a, b in zip(pts[:-1], pts[1:]):
        if margin(z1, z2, 0.5 * (a + b)) < 0:
            continue
        # 48-point Gauss-Legendre in c (the Born term is smooth inside the acceptance).
        cs = 0.5 * (a + b) + 0.5 * (b - a) * GL_X
        vals = born(shat, cs)
        if mode == 'bare':
            vals = vals * np.array([keep(e_min / lab(z1, z2, c)[3], beta) * keep(e_min / lab(z1, z2, c)[4], beta) for c in cs])
        total += 0.5 * (b - a) * np.dot(GL_W, vals)
    return total


def weight(t):
    z = 1 - t ** (2 / beta)
    return z, (1 + 3 * beta / 8) - 0.5 * (1 + z) * t ** (2 / beta - 1)


def f(t2, t1):
    z1, w1 = weight(t1)
    z2, w2 = weight(t2)
    if z1 <= 0 or z2 <= 0:
        return 0.0
    return w1 * w2 * inner(z1, z2)


# Split each t at the images of z = e_min, 2 e_min - 1, 0.9, 0.99 so quad starts from sensible pieces.
zs = [z for z in [e_min, 2 * e_min - 1, 0.9, 0.99] if 0 < z < 1]
tb = sorted({(1 - z) ** (beta / 2) for z in zs} | {0.0, 1.0})
sigma = 0.0
for a1, b1 in zip(tb[:-1], tb[1:]):
    for a2, b2 in zip(tb[:-1], tb[1:]):
        sigma += integrate.dblquad(f, a1, b1, a2, b2, epsabs=2e-4, epsrel=2e-5)[0]
print("sigma_nb", repr(sigma))

# Born-weighted mean ln|t| over the Born acceptance (the |t̄| scale)
cl, ch = np.cos(np.radians(th_max)), np.cos(np.radians(th_min))
lo, hi = max(cl, -ch), min(ch, -cl)
num = integrate.quad(lambda c: born(s, c) * np.log(0.5 * s * (1 - c)), lo, hi, epsrel=1e-12)[0]
den = integrate.quad(lambda c: born(s, c), lo, hi, epsrel=1e-12)[0]
print("lnt_mean", repr(num / den))
