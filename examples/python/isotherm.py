"""Along an isotherm of C/O matter: how the adiabatic index Γ1 goes from the ideal gas (5/3) through
electron degeneracy to the ultra-relativistic degenerate gas (4/3) — an analysis script on the
Python client.

    FERMIWELL_URL=http://127.0.0.1:8080 FERMIWELL_KEY=fwk_... python3 examples/python/isotherm.py

One binary request of 97 densities (1e-2 to 1e10 g/cm³, T = 1e6 K, electrons + positrons + ions: no
photons and no Coulomb term, so the two limits are those of ideal gases; at 1e6 K the electrons'
thermal relativistic correction to 5/3, of order k_B T/(m_e c²) ≈ 1.7e-4, stays small). Besides Γ1
it prints the degeneracy parameter η and x_F = p_F/(m_e c) of the electrons, the latter from the
electron density the API returns, x_F = (h/(m_e c)) (3 n_e/(8π))^(1/3) (CODATA 2018 constants). Uses NumPy for the
arithmetic when it is installed, plain Python otherwise; the output is the same.
"""

import math
import sys

from fermiwell_client import Client, FermiwellError, STATUS_NAMES, numpy

PLANCK_H = 6.62607015e-27        # erg s (CODATA 2018, exact)
ELECTRON_MASS = 9.1093837015e-28  # g (CODATA 2018)
LIGHT_C = 2.99792458e10          # cm/s (exact)
TEMPERATURE = 1.0e6              # K


def main():
    density = [10.0 ** (k / 8) for k in range(-16, 81)]
    fw = Client()
    try:
        out = fw.evaluate(
            density, [TEMPERATURE] * len(density), ["pressure", "gamma1", "eta", "electronDensity"],
            mixture="c12-o16", components=["electrons", "positrons", "ions"],
        )
    except FermiwellError as error:
        print(f"request refused: {error}", file=sys.stderr)
        return 2

    compton = PLANCK_H / (ELECTRON_MASS * LIGHT_C)
    if numpy is not None:
        x_f = compton * numpy.cbrt(3 * out["electronDensity"] / (8 * math.pi))
    else:
        x_f = [compton * (3 * n / (8 * math.pi)) ** (1 / 3) for n in out["electronDensity"]]

    print(f"# C/O isotherm T = {TEMPERATURE:.0e} K, components electrons,positrons,ions; numpy: {numpy is not None}")
    print(f"# meta: constants {fw.last_meta['constantsSet']}, method {fw.last_meta['method']}, points {fw.last_meta['points']}")
    print("# density[g/cm3] pressure[erg/cm3] gamma1 eta x_F status")
    for i, rho in enumerate(density):
        status = out["status"][i]
        print(f"point {rho:.6e} {out['pressure'][i]:.10e} {out['gamma1'][i]:.10f} {out['eta'][i]:.6e} "
              f"{x_f[i]:.6e} {status} {STATUS_NAMES.get(status, '?')}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
