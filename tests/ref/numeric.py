"""Independent values for the numeric toolkit (mpmath 1.3, scipy 1.14).

- li2: mpmath.polylog(2, z) at 30 digits, real and complex arguments;
- pv: scipy.integrate.quad(f, a, b, weight='cauchy', wvar=x0) = P∫ f(x)/(x − x0) dx (QAWC);
- alg: scipy.integrate.quad(g, 0, 1, weight='alg', wvar=(b-1, 0)) = ∫ x^(b−1) g(x) dx (QAWS).
Prints `key value` lines (complex values as key_re / key_im).
"""
import mpmath as mp
import numpy as np
from scipy import integrate

mp.mp.dps = 30
for i, x in enumerate([-30.0, -1.7, -0.3, 0.1, 0.49, 0.51, 0.93, 1.0, 1.5, 4.0, 250.0]):
    print(f"li2_real_{i}", x, mp.nstr(mp.re(mp.polylog(2, x)), 20))
for i, (re, im) in enumerate([(0.3, 0.4), (-2.0, 1.0), (0.9, -0.2), (3.0, 0.5), (0.5, 0.866)]):
    v = mp.polylog(2, mp.mpc(re, im))
    print(f"li2_cplx_{i}", re, im, mp.nstr(v.real, 20), mp.nstr(v.imag, 20))
v, _ = integrate.quad(np.cos, 0.0, np.pi, weight="cauchy", wvar=1.0, epsabs=1e-14, epsrel=1e-14)
print("pv_cos", v)
v, _ = integrate.quad(lambda x: np.exp(-x) / (1 + x), 0.0, 3.0, weight="cauchy", wvar=0.7, epsabs=1e-13, epsrel=1e-13, limit=200)
print("pv_exp", v)
b = 0.07
v, _ = integrate.quad(lambda x: np.cos(3 * x) / (1 + x * x), 0.0, 1.0, weight="alg", wvar=(b - 1, 0), epsabs=1e-14, epsrel=1e-14)
print("alg_cos", v)
