#!/usr/bin/env python3
"""Reference fluxes for the discrete-ordinate solver, from DISORT at several stream numbers.

Source: DISORT (Stamnes, Tsay, Wiscombe & Jayaweera 1988, Appl. Opt. 27, 2502) as
implemented by the PyPI package ``disortpp`` 1.2.1 (pinned in requirements.txt): Lambertian
surface, collimated beam, fluxes only, delta-M scaling (which DISORT always applies).

Writes ``tests/fixtures/disort_streams.csv`` deterministically (``%.12g``, values below 1e-13 as 0): one row per
(streams, column, mu0, albedo) with fluxes per unit incident horizontal flux (mu0 * F0 = 1):
``toa_up``, ``sfc_dn_direct`` (DISORT's unscaled direct beam), ``sfc_dn_diffuse`` (total
minus direct) and ``sfc_up``.

A column is written ``layers`` = layers top first separated by ``|``, each
``tau:ssa:rayleigh_share:g``: extinction optical depth, single-scattering albedo, the share of
the scattering optical depth due to molecules (Rayleigh phase function, Legendre moments
1, 0, 0.1) and the Henyey-Greenstein asymmetry factor of the rest (moments g^l); the two are
mixed by scattering optical depth.

Streams 4, 8 and 16 test implementation equivalence (same N); 32 is the converged reference.
Also ``mu0`` at the largest quadrature cosine of each N (the double-Gauss points, from numpy's
Gauss-Legendre nodes), where the particular solution is closest to its resonance.

Run from the crate root:  .venv/bin/python tests/reference/disort_streams_reference.py
"""

import os

import disortpp
import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
FIXTURES = os.path.join(HERE, "..", "fixtures")

STREAMS = [4, 8, 16, 32]
MU0S = [0.05, 0.2, 0.5, 1.0]
ALBEDOS = [0.0, 0.6]
AEROSOLS = [(0.001, 0.95, 0.8), (0.1, 0.8, 0.7), (1.0, 0.9, 0.6), (10.0, 1.0, 0.75)]
RAYLEIGH_TAU = 0.3


def columns():
    """Columns of 1, 2 and 3 layers (top first) as lists of (tau, ssa, rayleigh_share, g)."""
    out = []
    for tau, ssa, g in AEROSOLS:
        aer = (tau, ssa, 0.0, g)
        ray = (RAYLEIGH_TAU, 1.0, 1.0, 0.0)
        # Aerosol mixed with molecules and a little gas absorption in one layer.
        ray_sca = 0.2
        aer_sca = ssa * tau
        mixed = (tau + ray_sca + 0.02, (ray_sca + aer_sca) / (tau + ray_sca + 0.02),
                 ray_sca / (ray_sca + aer_sca), g)
        low = (0.1, 0.1 / 0.15, 1.0, 0.0)  # molecules with gas absorption
        out.append([aer])
        out.append([ray, aer])
        out.append([aer, ray])
        out.append([ray, mixed, low])
    return out


def moments(layer, nstr):
    """Legendre moments 0..nstr of a layer's phase function."""
    _, _, r, g = layer
    rayleigh = [1.0, 0.0, 0.1] + [0.0] * (nstr - 2)
    return [r * rayleigh[l] + (1.0 - r) * g ** l for l in range(nstr + 1)]


def solve(layers, nstr, mu0, albedo):
    cfg = disortpp.DisortConfig(len(layers), nstr)
    cfg.flags.use_lambertian_surface = True
    cfg.flags.comp_only_fluxes = True
    cfg.allocate()
    cfg.delta_tau = [lay[0] for lay in layers]
    cfg.single_scat_albedo = [lay[1] for lay in layers]
    cfg.phase_function_moments = [moments(lay, nstr) for lay in layers]
    cfg.bc.direct_beam_flux = 1.0 / mu0  # incident horizontal flux mu0 * F0 = 1
    cfg.bc.direct_beam_mu = mu0
    cfg.bc.surface_albedo = albedo
    res = disortpp.DisortSolver().solve(cfg)
    return (
        res.flux_up[0],
        res.flux_direct_beam[-1],
        res.flux_down[-1],
        res.flux_up[-1],
    )


def fmt(x):
    """Fixed format; values below 1e-13 (rounding noise, e.g. sfc_up over a black surface)
    are written as 0 so that the file does not depend on the last bits."""
    return "%.12g" % (0.0 if abs(x) < 1e-13 else x + 0.0)


def spell(layers):
    return "|".join(":".join(fmt(v) for v in lay) for lay in layers)


def main():
    rows = []
    for nstr in STREAMS:
        x, _ = np.polynomial.legendre.leggauss(nstr // 2)
        quad_mu = 0.5 * (1.0 + x.max())
        for col in columns():
            for mu0 in MU0S + [quad_mu]:
                for a in ALBEDOS:
                    f = solve(col, nstr, mu0, a)
                    rows.append([str(nstr), spell(col), fmt(mu0), fmt(a)] + [fmt(v) for v in f])
    header = ["streams", "layers", "mu0", "albedo",
              "toa_up", "sfc_dn_direct", "sfc_dn_diffuse", "sfc_up"]
    os.makedirs(FIXTURES, exist_ok=True)
    path = os.path.join(FIXTURES, "disort_streams.csv")
    with open(path, "w", newline="\n") as out:
        out.write(",".join(header) + "\n")
        for r in rows:
            out.write(",".join(r) + "\n")


if __name__ == "__main__":
    main()
