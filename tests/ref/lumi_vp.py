"""Independent large-angle Bhabha σ with one-loop leptonic vacuum polarisation (mpmath).

Π_ℓ(q²) one loop, exact in the mass (Peskin & Schroeder §7.5; physics notes §2):
Re Π = (α/3π)[−5/3 − y + (1 + y/2) b ln|(1+b)/(1−b)|], y = 4m²/q², b = √(1 − y),
Im Π(s + i0) = −(α/3) b(3 − b²)/2 above 4m². Dressed Bhabha (amplitude level):
dσ/dΩ = (α²/2s)[(s²+u²)/t² P_t² + 2u²/(st) Re(P_s) P_t + (t²+u²)/s² |P_s|²],
P = 1/(1 − Π). usage: lumi_vp.py sqrt_s theta_min_deg; prints sigma_born_nb, sigma_dressed_nb.
"""
import sys
import mpmath as mp

mp.mp.dps = 30
ALPHA = 1 / mp.mpf('137.035999177')
GEV2_NB = mp.mpf('0.3893793721e6')
MASSES = [mp.mpf('0.51099895069e-3'), mp.mpf('0.1056583755'), mp.mpf('1.77693')]

sqrt_s, th = mp.mpf(sys.argv[1]), mp.mpf(sys.argv[2])
s = sqrt_s**2


def pi(q2):
    tot = mp.mpc(0)
    for m in MASSES:
        y = 4 * m**2 / q2
        b = mp.sqrt(1 - y)
        re = ALPHA / (3 * mp.pi) * (-mp.mpf(5) / 3 - y + (1 + y / 2) * b * mp.log(abs((1 + b) / (1 - b))))
        im = -ALPHA / 3 * b * (3 - b**2) / 2 if q2 > 4 * m**2 else 0
        tot += mp.mpc(re, im)
    return tot


ps = 1 / (1 - pi(s))


def dsig(c, dressed):
    t = -s * (1 - c) / 2
    u = -s * (1 + c) / 2
    pt = 1 / (1 - pi(t).real) if dressed else 1
    p = ps if dressed else 1
    return 2 * mp.pi * ALPHA**2 / (2 * s) * ((s**2 + u**2) / t**2 * pt**2 + 2 * u**2 / (s * t) * mp.re(p) * pt
                                             + (t**2 + u**2) / s**2 * abs(p)**2) * GEV2_NB


c = mp.cos(th * mp.pi / 180)
print("sigma_born_nb", mp.nstr(mp.quad(lambda x: dsig(x, False), [-c, 0, c]), 20))
print("sigma_dressed_nb", mp.nstr(mp.quad(lambda x: dsig(x, True), [-c, 0, c]), 20))
