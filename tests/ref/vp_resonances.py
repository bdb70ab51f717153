"""Resonance parameters read from the PDG database bundled in the `pdg` package (2026.0).

Independent of radnorm: prints `key value` lines that tests/vp_resonances.rs compares with
tables/resonances.toml. Γ_ee is the PDG width Γ times the PDG branching fraction B(e+e-),
its uncertainty propagated in quadrature from both.
"""
import math
import warnings

warnings.filterwarnings("ignore")
import pdg  # noqa: E402

api = pdg.connect()
NAMES = {
    "rho": "rho(770)",
    "omega": "omega(782)",
    "phi": "phi(1020)",
    "jpsi": "J/psi(1S)",
    "psi2s": "psi(2S)",
    "ups1s": "Upsilon(1S)",
    "ups2s": "Upsilon(2S)",
    "ups3s": "Upsilon(3S)",
}
print("edition", api.edition)
for key, name in NAMES.items():
    p = [q for q in api.get_particles_by_name(name) if q.charge == 0][0]
    print(f"{key}.mass_gev {p.mass:.10g}")
    print(f"{key}.width_gev {p.width:.10g}")
    if key == "rho":
        continue
    bee = None
    for bf in p.branching_fractions():
        if bf.description.split("-->")[-1].strip() == "e+ e-" and bf.value is not None:
            bee = bf
            break
    gee = bee.value * p.width
    unc = gee * math.hypot(bee.error_positive / bee.value, p.width_error / p.width)
    print(f"{key}.gamma_ee_kev {gee * 1e6:.10g}")
    print(f"{key}.gamma_ee_unc_kev {unc * 1e6:.10g}")
