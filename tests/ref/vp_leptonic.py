"""One-loop leptonic vacuum polarisation by direct numerical integration (mpmath 1.3).

Independent of radnorm's closed forms: the Feynman-parameter representation
    Pi(q2 + i0) = (2 alpha/pi) * Int_0^1 dz z(1-z) log(1 - z(1-z) q2/m2 - i0)
(Peskin & Schroeder 1995, eq. 7.90) integrated with mpmath.quad at 30 digits, split at the
zeros of the log's argument. Arguments: pairs `q2 m`. Prints `re_<k> value` and `im_<k> value`.
"""
import sys
from mpmath import mp, mpf, mpc, quad, log, sqrt, pi

mp.dps = 30
ALPHA = 1 / mpf("137.035999177")
args = sys.argv[1:]
for k in range(0, len(args), 2):
    q2, m = mpf(args[k]), mpf(args[k + 1])
    x = q2 / (m * m)
    pts = [mpf(0), mpf(1)]
    if x > 4:
        d = sqrt(1 - 4 / x)
        pts = [mpf(0), (1 - d) / 2, (1 + d) / 2, mpf(1)]
    f = lambda z: z * (1 - z) * log(mpc(1 - z * (1 - z) * x, -mpf(10) ** -40))
    val = 2 * ALPHA / pi * quad(f, pts)
    print(f"re_{k // 2} {mp.nstr(val.real, 20)}")
    print(f"im_{k // 2} {mp.nstr(val.imag, 20)}")
