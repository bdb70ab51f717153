"""Independent radiated line shape for the scan-unfolding test (mpmath).

sigma_d(s) = a * sigma_pt(s) + b * (M G)^2 / ((s - M^2)^2 + (M G)^2), radiated with the
Kuraev-Fadin O(beta^2) radiator (Sov. J. Nucl. Phys. 41 (1985) 466) up to
x_max = 1 - m_min^2 / s. The soft term is treated by subtraction,
  beta * int_0^xm x^(beta-1) [f(x) - f(0)] dx + f(0) xm^beta,
not by the t = x^beta substitution the Rust code uses, so the two are independent.
Constants: CODATA 2022 alpha, m_e; PDG (hbar c)^2 = 0.3893793721 GeV^2 mb.

usage: scan_radiated.py a b M G m_min sqrt_s1 sqrt_s2 ...   prints "sqrt_s sigma_obs_nb"
"""
import sys
from mpmath import mp, mpf, pi, log, quad

mp.dps = 25
alpha = 1 / mpf("137.035999177")
me = mpf("0.51099895069e-3")
gev2nb = mpf("0.3893793721e6")

a, b, M, G, mmin = (mpf(v) for v in sys.argv[1:6])


def sigma_d(s):
    pt = 4 * pi * alpha**2 / (3 * s) * gev2nb
    mg = M * G
    return a * pt + b * mg**2 / ((s - M**2) ** 2 + mg**2)


for arg in sys.argv[6:]:
    e = mpf(arg)
    s = e * e
    beta = 2 * alpha / pi * (log(s / me**2) - 1)
    dvs = 1 + 3 * beta / 4 + alpha / pi * (pi**2 / 3 - mpf(1) / 2) + beta**2 * (mpf(9) / 32 - pi**2 / 12)
    xm = 1 - mmin**2 / s
    f0 = sigma_d(s)

    def hard(x):
        return -beta * (1 - x / 2) + beta**2 / 8 * (
            -4 * (2 - x) * log(x) - (1 + 3 * (1 - x) ** 2) * log(1 - x) / x - 6 + x
        )

    pts = [mpf(0)]
    for k in (-3, -1, 0, 1, 3):
        xr = 1 - (M**2 + k * M * G) / s
        if 0 < xr < xm:
            pts.append(xr)
    pts = sorted(pts) + [xm]
    soft = quad(lambda x: beta * x ** (beta - 1) * (sigma_d(s * (1 - x)) - f0), pts) + f0 * xm**beta
    hd = quad(lambda x: hard(x) * sigma_d(s * (1 - x)), pts)
    print(arg, mp.nstr(dvs * soft + hd, 20))
