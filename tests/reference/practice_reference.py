#!/usr/bin/env python3
"""Broadband 24-hour-mean aerosol forcing from DISORT, for the common-practice checks.

Source: DISORT (Stamnes, Tsay, Wiscombe & Jayaweera 1988, Appl. Opt. 27, 2502) as
implemented by the PyPI package ``disortpp`` 1.2.1 (pinned in requirements.txt), 16
streams, delta-M, Lambertian surface, collimated beam. The column is hazebook's default
column with the gases switched off, built independently here from the published methods:

* bands: the committed ASTM G173-03 band table ``src/physics/data/bands_g173.csv`` and its
  sub-wavelength weights ``src/physics/data/gas_subbands.csv`` (written by
  ``derive_bands.py``), scaled to a solar constant of 1361 W m-2 (Kopp & Lean 2011);
* Rayleigh: Bodhaine et al. (1999) eq. 30 (continued as lambda^-4 beyond 1 um), averaged
  over each band as -ln(sum_i W_i exp(-tau(lambda_i)) / sum_i W_i), Rayleigh phase function;
* vertical split: the share of the Rayleigh depth above 2 km from the U.S. Standard
  Atmosphere 1976 barometric formula (troposphere, geopotential altitude);
* aerosol: AOD(550 nm) with an Angstrom law at the band centre, constant SSA and
  Henyey-Greenstein asymmetry factor, in the bottom 2 km together with the Rayleigh share
  there (Legendre moments of the mixture weighted by the scattering depths);
* day: the Spencer (1971) declination (Iqbal 1983, eq. 1.3.1), the sunrise equation, and
  the 48-point Gauss-Legendre rule from sunrise to sunset folded at noon (24 zenith
  angles); no Earth-Sun distance factor.

Writes ``tests/fixtures/disort_broadband.csv`` deterministically (``%.10g``): per case the
24-hour-mean TOA and surface DRE [W m-2] and the clean-sky TOA incident flux.

Run from the crate root:  .venv/bin/python tests/reference/practice_reference.py
"""

import math
import os

import disortpp
import numpy as np

NSTR = 16
HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.join(HERE, "..", "..")
FIXTURES = os.path.join(ROOT, "tests", "fixtures")
DATA = os.path.join(ROOT, "src", "physics", "data")
SOLAR_CONSTANT = 1361.0
TOP_KM = 2.0
NODES = 24

# latitude [deg], (year, month, day, day of year), AOD(550), angstrom, ssa, g, albedo
CASES = [
    (0.0, (2023, 3, 21, 80), 0.1, 1.3, 1.0, 0.7, 0.05),
    (30.0, (2023, 3, 21, 80), 0.1, 1.3, 1.0, 0.7, 0.05),
    (30.0, (2023, 3, 21, 80), 0.3, 1.3, 0.85, 0.7, 0.05),
]


def fmt(x):
    return "%.10g" % x


def rows(path):
    with open(path) as f:
        lines = [l.strip() for l in f if l.strip() and not l.startswith("#")]
    return [l.split(",") for l in lines[1:]]


def bodhaine(lam_um):
    """Bodhaine et al. (1999) eq. 30 at 1013.25 hPa; lambda^-4 beyond 1 um."""
    if lam_um > 1.0:
        return bodhaine(1.0) * lam_um ** -4
    l2 = lam_um * lam_um
    inv = 1.0 / l2
    return (0.0021520 * (1.0455996 - 341.29061 * inv - 0.90230850 * l2)
            / (1.0 + 0.0027059889 * inv - 85.968563 * l2))


def pressure_ratio(z_m):
    """U.S. Standard Atmosphere 1976, troposphere: p(z)/p(0)."""
    r0 = 6356766.0
    h = r0 * z_m / (r0 + z_m)
    return (1.0 - 0.0065 * h / 288.15) ** (9.80665 * 0.0289644 / (8.3144598 * 0.0065))


def spencer_declination_rad(doy):
    g = 2.0 * math.pi * (doy - 1) / 365.0
    return (0.006918 - 0.399912 * math.cos(g) + 0.070257 * math.sin(g)
            - 0.006758 * math.cos(2 * g) + 0.000907 * math.sin(2 * g)
            - 0.002697 * math.cos(3 * g) + 0.00148 * math.sin(3 * g))


def toa_up_and_sfc_net(layers, mu0, albedo):
    """layers: top first, (tau, ssa, Legendre moments). Fractions of mu0 * F0."""
    cfg = disortpp.DisortConfig(len(layers), NSTR)
    cfg.flags.use_lambertian_surface = True
    cfg.flags.comp_only_fluxes = True
    cfg.allocate()
    cfg.delta_tau = [lay[0] for lay in layers]
    cfg.single_scat_albedo = [lay[1] for lay in layers]
    cfg.phase_function_moments = [list(lay[2]) for lay in layers]
    cfg.bc.direct_beam_flux = 1.0 / mu0
    cfg.bc.direct_beam_mu = mu0
    cfg.bc.surface_albedo = albedo
    res = disortpp.DisortSolver().solve(cfg)
    net_sfc = res.flux_direct_beam[-1] + res.flux_down[-1] - res.flux_up[-1]
    return res.flux_up[0], net_sfc


def main():
    bands = rows(os.path.join(DATA, "bands_g173.csv"))
    subs = rows(os.path.join(DATA, "gas_subbands.csv"))
    irr = np.array([float(b[4]) for b in bands])
    irr *= SOLAR_CONSTANT / irr.sum()
    centre = [float(b[3]) for b in bands]
    tau_r = []
    for b in range(len(bands)):
        w = np.array([float(s[2]) for s in subs if int(s[0]) == b])
        lam = np.array([float(s[1]) / 1000.0 for s in subs if int(s[0]) == b])
        t = np.array([math.exp(-bodhaine(x)) for x in lam])
        tau_r.append(-math.log(float(np.sum(w * t) / np.sum(w))))
    above = pressure_ratio(TOP_KM * 1000.0)
    nm = NSTR + 1
    rayleigh_mom = np.zeros(nm)
    rayleigh_mom[0], rayleigh_mom[2] = 1.0, 0.1
    x, w = np.polynomial.legendre.leggauss(2 * NODES)
    out = []
    for lat, (year, month, day, doy), aod, alpha, ssa, g, albedo in CASES:
        decl = spencer_declination_rad(doy)
        phi = math.radians(lat)
        c = -math.tan(phi) * math.tan(decl)
        h0 = 0.0 if c >= 1.0 else (math.pi if c <= -1.0 else math.acos(c))
        a_, b_ = math.sin(phi) * math.sin(decl), math.cos(phi) * math.cos(decl)
        nodes = [(a_ + b_ * math.cos(h0 * xi), h0 * wi / math.pi)
                 for xi, wi in zip(x[NODES:], w[NODES:])]
        hg = np.array([g ** k for k in range(nm)])
        down = dre_toa = dre_sfc = 0.0
        for e, lam, tr in zip(irr, centre, tau_r):
            ta = aod * (lam / 0.55) ** -alpha
            up_layer = (tr * above, 1.0, rayleigh_mom)
            tr_low = tr * (1.0 - above)
            clean_low = (tr_low, 1.0, rayleigh_mom)
            scat = tr_low + ssa * ta
            mix_mom = (tr_low * rayleigh_mom + ssa * ta * hg) / scat
            aer_low = (tr_low + ta, scat / (tr_low + ta), mix_mom)
            for mu0, wt in nodes:
                if mu0 <= 1e-6:
                    continue
                inc = e * mu0 * wt
                cu, cn = toa_up_and_sfc_net([up_layer, clean_low], mu0, albedo)
                au, an = toa_up_and_sfc_net([up_layer, aer_low], mu0, albedo)
                down += inc
                dre_toa += inc * (cu - au)
                dre_sfc += inc * (an - cn)
        out.append([lat, year, month, day, aod, alpha, ssa, g, albedo, down, dre_toa, dre_sfc])
    header = ["latitude_deg", "year", "month", "day", "aod_550", "angstrom", "ssa", "g",
              "albedo", "toa_down", "dre_toa", "dre_sfc"]
    os.makedirs(FIXTURES, exist_ok=True)
    with open(os.path.join(FIXTURES, "disort_broadband.csv"), "w", newline="\n") as f:
        f.write(",".join(header) + "\n")
        for r in out:
            f.write(",".join(fmt(v) for v in r) + "\n")


if __name__ == "__main__":
    main()
