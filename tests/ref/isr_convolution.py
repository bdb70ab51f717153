"""Independent evaluation of the ISR convolution with mpmath at 30 digits.

sigma_obs(s) = int_0^xm F(x,s) sigma(s(1-x)) dx, F the Kuraev-Fadin O(beta^2) radiator
(Sov. J. Nucl. Phys. 41 (1985) 466), sigma the massive QED Born mu+mu- cross-section
(4 pi alpha^2/3s) beta(3-beta^2)/2, optionally plus a constant-width Breit-Wigner
sigma_p M^2 Gamma^2/((s-M^2)^2 + M^2 Gamma^2). The soft term is integrated in t = x^beta,
the hard term in x; mpmath's tanh-sinh rule on intervals split at the features.
Constants are written out here (CODATA 2022), not taken from radnorm.
Prints "name value" lines.
"""
import mpmath as mp

mp.mp.dps = 30
ALPHA = 1 / mp.mpf("137.035999177")
ME = mp.mpf("0.51099895069e-3")
MMU = mp.mpf("0.1056583755")
GEV2_TO_NB = mp.mpf("0.3893793721e6")


def born_mumu(s):
    if s <= 4 * MMU**2:
        return mp.mpf(0)
    b = mp.sqrt(1 - 4 * MMU**2 / s)
    return 4 * mp.pi * ALPHA**2 / (3 * s) * b * (3 - b**2) / 2 * GEV2_TO_NB


def radiator(s, scheme):
    L = mp.log(s / ME**2)
    beta = 2 * ALPHA / mp.pi * (L - 1)
    k = ALPHA / mp.pi * (mp.pi**2 / 3 - mp.mpf(1) / 2)
    if scheme == "kf2":
        soft = 1 + 3 * beta / 4 + k + beta**2 * (mp.mpf(9) / 32 - mp.pi**2 / 12)

        def hard(x):
            return -beta * (1 - x / 2) + beta**2 / 8 * (
                -4 * (2 - x) * mp.log(x) - (1 + 3 * (1 - x) ** 2) * mp.log(1 - x) / x - 6 + x)
    elif scheme == "exp1":
        soft = 1 + 3 * beta / 4 + k

        def hard(x):
            return -beta * (1 - x / 2)
    else:  # sfll
        soft = mp.exp(beta * (mp.mpf(3) / 4 - mp.euler)) / mp.gamma(1 + beta) * (1 + k)

        def hard(x):
            return -beta * (1 - x / 2)
    return beta, soft, hard


def observed(sqrt_s, xm, scheme, bw=None):
    s = mp.mpf(sqrt_s) ** 2
    beta, soft, hard = radiator(s, scheme)

    def sig(sp):
        v = born_mumu(sp)
        if bw:
            m, g, peak = bw
            v += peak * m**2 * g**2 / ((sp - m**2) ** 2 + m**2 * g**2)
        return v

    xs = [mp.mpf(0), xm]
    if bw:
        m, g, _ = bw
        xr, w = 1 - m**2 / s, m * g / s
        xs += [xr + k * w for k in (-100, -10, -1, 0, 1, 10, 100) if 0 < xr + k * w < xm]
    xs = sorted(xs)
    ts = [x**beta for x in xs]
    soft_part = soft * mp.quad(lambda t: sig(s * (1 - t ** (1 / beta))), ts)
    hard_part = mp.quad(lambda x: hard(x) * sig(s * (1 - x)), xs)
    return soft_part + hard_part


def threshold_x(sqrt_s):
    return 1 - 4 * MMU**2 / mp.mpf(sqrt_s) ** 2


# Breit-Wigner peaks (M GeV, Gamma GeV, sigma_p nb): a J/psi-like narrow one (M = 3.0969 GeV,
# Gamma = 92.6 keV, 3000 nb) and a 40 MeV wide one of 30 nb at 5.2 GeV.
NARROW = (mp.mpf("3.0969"), mp.mpf("92.6e-6"), mp.mpf(3000))
WIDE = (mp.mpf("5.2"), mp.mpf("0.04"), mp.mpf(30))

cases = {
    "kf2_3_half": (3, mp.mpf("0.5"), "kf2", None),
    "kf2_10_half": (10, mp.mpf("0.5"), "kf2", None),
    "kf2_10_open": (10, threshold_x(10), "kf2", None),
    "kf2_1_open": (1, threshold_x(1), "kf2", None),
    "kf2_025_open": (mp.mpf("0.25"), threshold_x(mp.mpf("0.25")), "kf2", None),
    "exp1_10_half": (10, mp.mpf("0.5"), "exp1", None),
    "sfll_10_half": (10, mp.mpf("0.5"), "sfll", None),
    # The J/psi-like narrow peak below sqrt(s).
    "kf2_bw_32_half": (mp.mpf("3.2"), mp.mpf("0.5"), "kf2", NARROW),
    # sqrt(s) on a peak, just below it and just above it: the 40 MeV wide peak (a scan
    # across a resonance) and the narrow one above.
    "kf2_bw40_on": (mp.mpf("5.2"), mp.mpf("0.5"), "kf2", WIDE),
    "kf2_bw40_below": (mp.mpf("5.15"), mp.mpf("0.5"), "kf2", WIDE),
    "kf2_bw40_above": (mp.mpf("5.26"), mp.mpf("0.5"), "kf2", WIDE),
    "kf2_narrow_on": (mp.mpf("3.0969"), mp.mpf("0.5"), "kf2", NARROW),
    "kf2_narrow_below": (mp.mpf("3.0967"), mp.mpf("0.5"), "kf2", NARROW),
}
for name, (rs, xm, scheme, bw) in cases.items():
    print(name, mp.nstr(observed(rs, xm, scheme, bw), 20))
