"""Independent Born cross-sections with mpmath at 30 digits (mpmath 1.3).

Formulas are typed in afresh from the published forms and integrated numerically with
mpmath.quad, so that neither the closed-form antiderivatives nor the code structure of
radnorm is shared:
- fermion pair with gamma+Z: the PDG review "Electroweak model and constraints on new
  physics" massless form, with the standard mass terms beta(3-beta^2)/2 (vector) and
  beta^3 (axial) -- written here as the angular distribution and integrated;
- Bhabha: Peskin & Schroeder problem 5.2, (alpha^2/2s)[(s^2+u^2)/t^2 + 2u^2/(st) + (t^2+u^2)/s^2];
- di-photon: (alpha^2/s)(1+c^2)/(1-c^2), identical photons counted once.
Prints `key value` lines.
"""
import mpmath as mp

mp.mp.dps = 30
alpha = 1 / mp.mpf("137.035999177")     # CODATA 2022
gev2nb = mp.mpf("0.3893793721e6")        # PDG (hbar c)^2
m_mu = mp.mpf("0.1056583755")            # CODATA 2022
m_tau = mp.mpf("1.77693")                # PDG 2026
MZ, GZ = mp.mpf("91.1880"), mp.mpf("2.4955")  # PDG 2026
GF = mp.mpf("1.1663787e-5")              # CODATA 2022
sw2 = mp.mpf("0.23148")                  # PDG 2026 sin^2 theta_eff
kappa = mp.sqrt(2) * GF * MZ**2 / (4 * mp.pi * alpha)


def chi(s):
    return kappa * s / (s - MZ**2 + 1j * s * GZ / MZ)


def dsig_ff(s, c, m, z):
    beta2 = 1 - 4 * m**2 / s
    if beta2 <= 0:
        return mp.mpf(0)
    b = mp.sqrt(beta2)
    qe = qf = -1
    ve = vf = -mp.mpf(1) / 2 + 2 * sw2
    ae = af = -mp.mpf(1) / 2
    x = chi(s) if z else mp.mpc(0)
    n2 = abs(x) ** 2
    cv = qe**2 * qf**2 + 2 * qe * qf * ve * vf * x.real + (ve**2 + ae**2) * vf**2 * n2
    caa = (ve**2 + ae**2) * af**2 * n2
    ca = 2 * qe * qf * ae * af * x.real + 4 * ve * ae * vf * af * n2
    pre = mp.pi * alpha**2 / (2 * s) * gev2nb
    return pre * b * (cv * (2 - beta2 * (1 - c**2)) + caa * beta2 * (1 + c**2) + 2 * b * ca * c)


def bhabha(s, c):
    t = -s * (1 - c) / 2
    u = -s * (1 + c) / 2
    return 2 * mp.pi * alpha**2 / (2 * s) * ((s**2 + u**2) / t**2 + 2 * u**2 / (s * t) + (t**2 + u**2) / s**2) * gev2nb


def gg(s, c):
    return mp.pi * alpha**2 / s * (1 + c**2) / (1 - c**2) * gev2nb


def out(key, v):
    print(key, mp.nstr(v, 20))


for sqrt_s in ["3.0", "10.58", "34.5", "91.2"]:
    s = mp.mpf(sqrt_s) ** 2
    for name, m in [("mumu", m_mu), ("tautau", m_tau)]:
        for z in [False, True]:
            tot = mp.quad(lambda c: dsig_ff(s, c, m, z), [-1, 1])
            tag = f"{name}{'_z' if z else ''}_{sqrt_s}"
            out(f"sigma_{tag}", tot)
            if z and tot > 0:
                fwd = mp.quad(lambda c: dsig_ff(s, c, m, z), [0, 1])
                out(f"afb_{tag}", (2 * fwd - tot) / tot)
    # Bhabha and gamma-gamma with both particles in 40-140 degrees: |cos| < cos 40
    cmax = mp.cos(mp.radians(40))
    out(f"bhabha_{sqrt_s}", mp.quad(lambda c: bhabha(s, c), [-cmax, 0, cmax]))
    out(f"gg_{sqrt_s}", mp.quad(lambda c: gg(s, c), [-cmax, 0, cmax]))


# Bhabha with gamma+Z in the B1/B2/B3 form of the LEP-era literature (typed in from memory;
# overall normalisation fixed so that the QED limit is the textbook form above):
# dsigma/dcos = (pi alpha^2 / 2s) [4 B1 + (1-c)^2 B2 + (1+c)^2 B3] / 2
def bhabha_z(s, c):
    t = -s * (1 - c) / 2
    gv, ga = -mp.mpf(1) / 2 + 2 * sw2, -mp.mpf(1) / 2
    xs = chi(s)
    xt = kappa * t / (t - MZ**2)
    b1 = (s / t) ** 2 * abs(1 + (gv**2 - ga**2) * xt) ** 2
    b2 = abs(1 + (gv**2 - ga**2) * xs) ** 2
    b3 = (abs(1 + s / t + (gv + ga) ** 2 * (s / t * xt + xs)) ** 2 + abs(1 + s / t + (gv - ga) ** 2 * (s / t * xt + xs)) ** 2) / 2
    return mp.pi * alpha**2 / (2 * s) * (4 * b1 + (1 - c) ** 2 * b2 + (1 + c) ** 2 * b3) / 2 * gev2nb


cmax = mp.cos(mp.radians(40))
for sqrt_s in ["10.58", "50.0", "91.2"]:
    s = mp.mpf(sqrt_s) ** 2
    out(f"bhabha_z_{sqrt_s}", mp.quad(lambda c: bhabha_z(s, c), [-cmax, 0, cmax]))


# Narrow cos(theta) bins (the edges as the Rust tests compute them in binary64; mp.mpf takes a
# float exactly): tau pairs with gamma+Z backward of the Z, where the closed form's
# antiderivative difference once lost 3.7e-12, and Bhabha / gamma-gamma bins 1e-4 wide.
def narrow(key, f, lo, hi):
    out(key, mp.quad(f, [mp.mpf(lo), mp.mpf(hi)]))


for i, (sqrt_s, lo) in enumerate([(111.8079648618288, -0.913064457293868), (124.0, -0.95)]):
    s = mp.mpf(sqrt_s * sqrt_s)
    narrow(f"narrow_tautau_z_{i}", lambda c: dsig_ff(s, c, m_tau, True), lo, lo + 1e-3)
for i, lo in enumerate([-0.9, -0.5, 0.0, 0.3, 0.9, 0.999]):
    narrow(f"narrow_bhabha_{i}", lambda c: bhabha(mp.mpf(25.0), c), lo, lo + 1e-4)
    narrow(f"narrow_gg_{i}", lambda c: gg(mp.mpf(9.0), c), lo, lo + 1e-4)
