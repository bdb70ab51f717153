"""alpha_s(mu) by scipy.integrate.solve_ivp (scipy 1.14), independent of radnorm's RK4.

Four-loop MS-bar beta function for a = alpha_s/pi (van Ritbergen, Vermaseren & Larin 1997),
alpha_s(M_Z = 91.1880 GeV) = 0.1180, flavour thresholds at m_c = 1.2729 GeV and
m_b = 4.186 GeV with continuous matching. Arguments: energies mu in GeV; prints `as_<mu> value`.
"""
import math
import sys

from scipy.integrate import solve_ivp

Z3 = 1.2020569031595942


def beta(nf):
    return [
        (11 - 2 * nf / 3) / 4,
        (102 - 38 * nf / 3) / 16,
        (2857 / 2 - 5033 * nf / 18 + 325 * nf**2 / 54) / 64,
        (149753 / 6 + 3564 * Z3 - (1078361 / 162 + 6508 * Z3 / 27) * nf
         + (50065 / 162 + 6472 * Z3 / 81) * nf**2 + 1093 * nf**3 / 729) / 256,
    ]


def run(a0, t0, t1, nf):
    b = beta(nf)
    f = lambda t, a: [-a[0] ** 2 * (b[0] + a[0] * (b[1] + a[0] * (b[2] + a[0] * b[3])))]
    return solve_ivp(f, (t0, t1), [a0], rtol=1e-12, atol=1e-15).y[0][-1]


MZ, MC, MB = 91.1880, 1.2729, 4.186
tz, tc, tb = (math.log(m * m) for m in (MZ, MC, MB))
az = 0.1180 / math.pi
ab = run(az, tz, tb, 5)
ac = run(ab, tb, tc, 4)
for arg in sys.argv[1:]:
    t = math.log(float(arg) ** 2)
    if t >= tb:
        a = run(az, tz, t, 5)
    elif t >= tc:
        a = run(ab, tb, t, 4)
    else:
        a = run(ac, tc, t, 3)
    print(f"as_{arg} {a * math.pi:.15g}")
