"""Independent Gaussian smearing of a Lorentzian line: the Voigt profile (scipy).

A Lorentzian in W = sqrt(s), sigma_p (G/2)^2/((W-M)^2 + (G/2)^2), convolved with a normal
density of width sw, is sigma_p * pi * (G/2) * voigt_profile(W - M, sw, G/2)
(scipy.special.voigt_profile, through the Faddeeva function). Prints "name value".
"""
import sys
from math import pi
from scipy.special import voigt_profile

M, SW, PEAK = 3.097, 1e-3, 1000.0
for ratio in (1e-2, 1.0, 1e2):
    g = ratio * SW
    for k in (0, 2):
        w = M + k * SW
        v = PEAK * pi * (g / 2) * voigt_profile(w - M, SW, g / 2)
        print(f"r{ratio:g}_k{k} {v:.17e}")
sys.exit(0)
