"""Read constants back from the PDG database bundled by the `pdg` package (edition 2026).

Prints `key value error` lines (GeV, or dimensionless).
"""
import warnings

warnings.filterwarnings("ignore")
import pdg

api = pdg.connect()
print("edition", api.edition)


def particle(key, name):
    p = api.get_particle_by_name(name)
    print(key, p.mass, p.mass_error)
    return p


particle("m_e", "e-")
particle("m_mu", "mu-")
particle("m_tau", "tau-")
z = particle("m_z", "Z0")
for key, pid, scale in [("gamma_z", "S044W", 1.0), ("gamma_ll_mev", "S044W4", 1.0), ("sin2_eff", "S044SEF", 1.0)]:
    v = api.get(pid).summary_values()[0]
    print(key, v.value * scale, v.error_positive * scale)
