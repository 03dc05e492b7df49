#!/usr/bin/env python3
"""Multiple-scattering reference fluxes for the two-stream solver, from DISORT.

Source: DISORT (Stamnes, Tsay, Wiscombe & Jayaweera 1988, Appl. Opt. 27, 2502) as
implemented by the PyPI package ``disortpp`` 1.2.1 (pinned in requirements.txt), with
16 streams, Henyey-Greenstein phase function (delta-M scaling, which DISORT applies by
default), Lambertian surface and a collimated beam.

Writes, deterministically (``%.10g``):

* ``tests/fixtures/disort_layers.csv`` -- instantaneous fluxes per unit incident horizontal
  flux (mu0 * F0 = 1) for

  - ``kind = layer``: one homogeneous aerosol layer (tau, ssa, g) over the surface; the
    aerosol-free column is the bare surface (TOA up = A, surface down direct = 1), so its
    fluxes are not repeated;
  - ``kind = stack``: a Rayleigh layer (optical depth ``tau_rayleigh``, ssa 1, the Rayleigh
    phase function of disortpp's ``set_rayleigh``) over the aerosol layer; the ``clean_*``
    columns hold the same Rayleigh layer alone over the same surface.

  Columns ``toa_up``, ``sfc_dn_direct`` (the unscattered beam, DISORT's unscaled direct
  flux), ``sfc_dn_diffuse`` (total minus direct), ``sfc_up``.

* ``tests/fixtures/disort_daily.csv`` -- 24-hour-mean fluxes [W m^-2] of one aerosol layer
  over a Lambertian surface for a fixed solar constant (no Earth-Sun distance factor), the
  day geometry of Spencer (1971) as given by Iqbal (1983), eq. 1.3.1 (declination), and the
  sunrise equation cos h0 = -tan(lat) tan(decl); DISORT is integrated over hour angle from
  noon to sunset with 64 Gauss-Legendre nodes (doubled for the morning).

* ``tests/fixtures/disort_albedo.csv`` -- one aerosol layer over bright surfaces (albedo
  0.6-0.95: desert, snow, ice), the same columns as ``disort_layers.csv`` (``kind = bright``),
  for the response of the TOA effect to the surface albedo.

Run from the crate root:  .venv/bin/python tests/reference/disort_reference.py
"""

import math
import os

import disortpp
import numpy as np

NSTR = 16
HERE = os.path.dirname(os.path.abspath(__file__))
FIXTURES = os.path.join(HERE, "..", "fixtures")

TAUS = [0.02, 0.1, 0.3, 0.7, 1.2, 2.0]
SSAS = [0.75, 0.85, 0.95, 1.0]
GS = [0.5, 0.65, 0.8]
MU0S = [0.1, 0.2, 0.4, 0.7, 1.0]
ALBEDOS = [0.05, 0.2, 0.6]

STACK_TAUS = [0.1, 0.3, 0.7]
STACK_SSAS = SSAS
STACK_GS = GS
STACK_RAYLEIGH = [0.1, 0.3]

BRIGHT_TAUS = [0.1, 0.3, 1.0]
BRIGHT_SSAS = [0.85, 0.95, 0.99, 1.0]
BRIGHT_GS = [0.6, 0.75]
BRIGHT_MU0S = [0.3, 0.6, 0.95]
BRIGHT_ALBEDOS = [0.6, 0.7, 0.8, 0.85, 0.9, 0.95]

DAILY_LATS = [0.0, 30.0, 60.0, 75.0]
DAILY_DAYS = [(2021, 3, 20, 79), (2021, 6, 21, 172), (2021, 12, 21, 355)]
DAILY_TAUS = [0.1, 0.5]
DAILY_SSAS = [0.8, 0.9, 1.0]
DAILY_G = 0.7
DAILY_ALBEDOS = [0.05, 0.3]
DAILY_NODES = 64
SOLAR_CONSTANT = 1361.0


def solve(layers, mu0, albedo):
    """Fluxes per unit incident horizontal flux; layers top first as (tau, ssa, g|None).

    g = None selects the Rayleigh phase function, otherwise Henyey-Greenstein with g.
    Returns (toa_up, sfc_dn_direct, sfc_dn_diffuse, sfc_up).
    """
    cfg = disortpp.DisortConfig(len(layers), NSTR)
    cfg.flags.use_lambertian_surface = True
    cfg.flags.comp_only_fluxes = True
    cfg.allocate()
    cfg.delta_tau = [lay[0] for lay in layers]
    cfg.single_scat_albedo = [lay[1] for lay in layers]
    for lc, lay in enumerate(layers):
        if lay[2] is None:
            cfg.set_rayleigh(lc=lc)
        else:
            cfg.set_henyey_greenstein(g=lay[2], lc=lc)
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
    return "%.10g" % x


def write_layers():
    header = [
        "kind", "tau", "ssa", "g", "mu0", "albedo", "tau_rayleigh",
        "toa_up", "sfc_dn_direct", "sfc_dn_diffuse", "sfc_up",
        "clean_toa_up", "clean_sfc_dn_direct", "clean_sfc_dn_diffuse", "clean_sfc_up",
    ]
    rows = []
    for tau in TAUS:
        for ssa in SSAS:
            for g in GS:
                for mu0 in MU0S:
                    for a in ALBEDOS:
                        f = solve([(tau, ssa, g)], mu0, a)
                        clean = (a, 1.0, 0.0, a)
                        rows.append(["layer", tau, ssa, g, mu0, a, 0.0, *f, *clean])
    for tr in STACK_RAYLEIGH:
        for tau in STACK_TAUS:
            for ssa in STACK_SSAS:
                for g in STACK_GS:
                    for mu0 in MU0S:
                        for a in ALBEDOS:
                            f = solve([(tr, 1.0, None), (tau, ssa, g)], mu0, a)
                            clean = solve([(tr, 1.0, None)], mu0, a)
                            rows.append(["stack", tau, ssa, g, mu0, a, tr, *f, *clean])
    path = os.path.join(FIXTURES, "disort_layers.csv")
    with open(path, "w", newline="\n") as out:
        out.write(",".join(header) + "\n")
        for r in rows:
            out.write(",".join([r[0]] + [fmt(x) for x in r[1:]]) + "\n")


def write_bright():
    header = [
        "kind", "tau", "ssa", "g", "mu0", "albedo", "tau_rayleigh",
        "toa_up", "sfc_dn_direct", "sfc_dn_diffuse", "sfc_up",
        "clean_toa_up", "clean_sfc_dn_direct", "clean_sfc_dn_diffuse", "clean_sfc_up",
    ]
    rows = []
    for tau in BRIGHT_TAUS:
        for ssa in BRIGHT_SSAS:
            for g in BRIGHT_GS:
                for mu0 in BRIGHT_MU0S:
                    for a in BRIGHT_ALBEDOS:
                        f = solve([(tau, ssa, g)], mu0, a)
                        clean = (a, 1.0, 0.0, a)
                        rows.append(["bright", tau, ssa, g, mu0, a, 0.0, *f, *clean])
    path = os.path.join(FIXTURES, "disort_albedo.csv")
    with open(path, "w", newline="\n") as out:
        out.write(",".join(header) + "\n")
        for r in rows:
            out.write(",".join([r[0]] + [fmt(x) for x in r[1:]]) + "\n")


def spencer_declination_rad(doy):
    """Spencer (1971), Iqbal (1983) eq. 1.3.1."""
    g = 2.0 * math.pi * (doy - 1) / 365.0
    return (0.006918 - 0.399912 * math.cos(g) + 0.070257 * math.sin(g)
            - 0.006758 * math.cos(2 * g) + 0.000907 * math.sin(2 * g)
            - 0.002697 * math.cos(3 * g) + 0.00148 * math.sin(3 * g))


def write_daily():
    header = [
        "latitude_deg", "year", "month", "day", "tau", "ssa", "g", "albedo",
        "solar_constant_wm2", "toa_down", "toa_up", "sfc_net",
        "clean_toa_up", "clean_sfc_net",
    ]
    x, w = np.polynomial.legendre.leggauss(DAILY_NODES)
    rows = []
    for lat in DAILY_LATS:
        for (year, month, day, doy) in DAILY_DAYS:
            decl = spencer_declination_rad(doy)
            phi = math.radians(lat)
            c = -math.tan(phi) * math.tan(decl)
            h0 = 0.0 if c >= 1.0 else (math.pi if c <= -1.0 else math.acos(c))
            a_, b_ = math.sin(phi) * math.sin(decl), math.cos(phi) * math.cos(decl)
            nodes = []
            if h0 > 0.0:
                for xi, wi in zip(x, w):
                    h = 0.5 * h0 * (1.0 + xi)
                    mu0 = a_ + b_ * math.cos(h)
                    if mu0 > 1e-6:
                        nodes.append((mu0, h0 * wi / (2.0 * math.pi)))
            for tau in DAILY_TAUS:
                for ssa in DAILY_SSAS:
                    for alb in DAILY_ALBEDOS:
                        down = up = net = cup = cnet = 0.0
                        for mu0, wt in nodes:
                            f = solve([(tau, ssa, DAILY_G)], mu0, alb)
                            inc = SOLAR_CONSTANT * mu0 * wt
                            down += inc
                            up += inc * f[0]
                            net += inc * (f[1] + f[2] - f[3])
                            cup += inc * alb
                            cnet += inc * (1.0 - alb)
                        rows.append([lat, year, month, day, tau, ssa, DAILY_G, alb,
                                     SOLAR_CONSTANT, down, up, net, cup, cnet])
    path = os.path.join(FIXTURES, "disort_daily.csv")
    with open(path, "w", newline="\n") as out:
        out.write(",".join(header) + "\n")
        for r in rows:
            out.write(",".join(fmt(v) for v in r) + "\n")


if __name__ == "__main__":
    os.makedirs(FIXTURES, exist_ok=True)
    write_layers()
    write_daily()
    write_bright()
