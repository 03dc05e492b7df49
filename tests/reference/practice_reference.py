#!/usr/bin/env python3
"""Broadband 24-hour-mean aerosol forcing from DISORT, for the common-practice checks.

Source: DISORT (Stamnes, Tsay, Wiscombe & Jayaweera 1988, Appl. Opt. 27, 2502) as
implemented by the PyPI package ``disortpp`` 1.2.1 (pinned in requirements.txt), 16
streams, delta-M, Lambertian surface, collimated beam, solved at every wavelength of the
ASTM G173-03 table. The column is the one described in the README ("Methods"), built here
from the published methods and the published tables only -- nothing is read from hazebook's
own band or gas tables:

* spectrum: the extraterrestrial column of ASTM G173-03 as shipped by pvlib
  (``pvlib/data/ASTMG173.csv``, 2002 wavelengths 280-4000 nm) on its own grid, integrated
  with the trapezoid rule and scaled to a solar constant of 1361 W m-2 (Kopp & Lean 2011);
* Rayleigh: Bodhaine et al. (1999) eq. 30 at each wavelength (a fit over 0.25-1 um; continued
  as lambda^-4 beyond 1 um, where the refractive index of air hardly changes), scaled by
  p / 1013.25 hPa, Rayleigh phase function (Legendre moments 1, 0, 0.1);
* gases: Bird & Riordan (1986), J. Climate Appl. Meteor. 25, 87-97, eqs. 2-8 (water
  vapour, relative air mass m), 2-9/2-10 (ozone, ozone air mass M_o with h_o = 22 km) and
  2-11 (mixed gases, m p / 1013.25 hPa, with the constant 118.3 of NREL's spectrl2_2.c),
  coefficients from pvlib's ``spectrl2`` table interpolated linearly in wavelength (below
  300 nm, outside that table: ozone extrapolated log-linearly with the 300-305 nm slope,
  water and mixed gases zero); m from Kasten & Young (1989). At each sun position the
  slant transmittance T of each gas is turned into the vertical depth -mu0 ln T, so that
  the beam meets exactly T along its path;
* vertical split: pressure shares from the U.S. Standard Atmosphere 1976 barometric formula
  (troposphere, geopotential altitude): above the aerosol top the Rayleigh and mixed-gas
  shares and all the ozone; in the aerosol layer (base to top) its Rayleigh and mixed-gas
  shares, the aerosol and the water vapour; below an elevated layer the rest. Water vapour
  is all below the aerosol top, shared between the aerosol layer and the air below it by
  pressure;
* aerosol: AOD(550 nm) with an Angstrom law at each wavelength, constant SSA and
  Henyey-Greenstein asymmetry factor; Legendre moments of each layer's mixture weighted by
  the scattering depths;
* day: the Spencer (1971) declination (Iqbal 1983, eq. 1.3.1), the sunrise equation, and
  the 24-point Gauss-Legendre rule from sunrise to sunset folded at noon (12 zenith
  angles); no Earth-Sun distance factor.

Writes ``tests/fixtures/disort_broadband.csv`` deterministically (``%.10g``): per case the
24-hour-mean TOA incident flux and TOA and surface DRE [W m-2]. The first twelve columns
keep the layout of earlier versions; ``ozone_du``, ``water_cm``, ``base_km``, ``top_km``
follow (ozone 0 and water 0: gases off, the mixed gases too).

Run from the crate root:  .venv/bin/python tests/reference/practice_reference.py
(about two minutes: some 300,000 DISORT solutions).
"""

import csv
import math
import os

import disortpp
import numpy as np
import pvlib
from pvlib.spectrum.spectrl2 import _SPECTRL2_COEFFS

NSTR = 16
HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.join(HERE, "..", "..")
FIXTURES = os.path.join(ROOT, "tests", "fixtures")
G173 = os.path.join(os.path.dirname(pvlib.__file__), "data", "ASTMG173.csv")
SOLAR_CONSTANT = 1361.0
STANDARD_HPA = 1013.25
NODES = 12

# latitude [deg], (year, month, day, day of year), AOD(550), angstrom, ssa, g, albedo,
# ozone [DU], water [cm], aerosol base and top [km]. Sea level throughout.
EQUINOX = (2023, 3, 21, 80)
CASES = [
    (0.0, EQUINOX, 0.1, 1.3, 1.0, 0.7, 0.05, 0.0, 0.0, 0.0, 2.0),
    (30.0, EQUINOX, 0.1, 1.3, 1.0, 0.7, 0.05, 0.0, 0.0, 0.0, 2.0),
    (30.0, EQUINOX, 0.3, 1.3, 0.85, 0.7, 0.05, 0.0, 0.0, 0.0, 2.0),
    (30.0, EQUINOX, 0.1, 1.3, 1.0, 0.7, 0.05, 300.0, 1.4, 0.0, 2.0),
    (30.0, EQUINOX, 0.3, 1.3, 0.97, 0.75, 0.05, 300.0, 1.4, 0.0, 2.0),
    (30.0, EQUINOX, 0.3, 1.3, 0.85, 0.7, 0.05, 300.0, 1.4, 0.0, 2.0),
    (30.0, EQUINOX, 0.3, 1.3, 0.85, 0.7, 0.15, 300.0, 1.4, 0.0, 2.0),
    (30.0, EQUINOX, 0.3, 1.3, 0.85, 0.7, 0.15, 300.0, 1.4, 3.0, 5.0),
]


def fmt(x):
    return "%.10g" % x


def g173():
    """Wavelengths [um] and trapezoid weights [W m-2] scaled to the solar constant."""
    lam, etr = [], []
    with open(G173, newline="") as f:
        rows = list(csv.reader(f))
    for r in rows[2:]:
        lam.append(float(r[0]))
        etr.append(float(r[1]))
    lam = np.array(lam)
    etr = np.array(etr)
    dl = np.diff(lam)
    w = np.zeros_like(lam)
    w[:-1] += 0.5 * dl
    w[1:] += 0.5 * dl
    w *= etr
    return lam / 1000.0, w * (SOLAR_CONSTANT / w.sum())


def bodhaine(lam_um):
    """Bodhaine et al. (1999) eq. 30 at 1013.25 hPa; lambda^-4 beyond 1 um."""
    if lam_um > 1.0:
        return bodhaine(1.0) * lam_um ** -4
    l2 = lam_um * lam_um
    inv = 1.0 / l2
    return (0.0021520 * (1.0455996 - 341.29061 * inv - 0.90230850 * l2)
            / (1.0 + 0.0027059889 * inv - 85.968563 * l2))


def gas_coefficients(lam_um):
    """Bird & Riordan (1986) ao [1/atm-cm], aw [1/cm], au at each wavelength."""
    wl = _SPECTRL2_COEFFS["wavelength"] / 1000.0
    ao = np.interp(lam_um, wl, _SPECTRL2_COEFFS["ozone_absorption"])
    aw = np.interp(lam_um, wl, _SPECTRL2_COEFFS["water_vapor_absorption"])
    au = np.interp(lam_um, wl, _SPECTRL2_COEFFS["mixed_absorption"])
    k0, k1 = _SPECTRL2_COEFFS["ozone_absorption"][:2]
    slope = math.log(k0 / k1) / (wl[0] - wl[1])
    below = lam_um < wl[0]
    ao[below] = k0 * np.exp(slope * (lam_um[below] - wl[0]))
    aw[below] = 0.0
    au[below] = 0.0
    return ao, aw, au


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


def kasten_young(zenith_deg):
    return 1.0 / (math.cos(math.radians(zenith_deg))
                  + 0.50572 * (96.07995 - zenith_deg) ** -1.6364)


def ozone_airmass(zenith_deg):
    h = 22.0 / 6370.0
    c = math.cos(math.radians(zenith_deg))
    return (1.0 + h) / math.sqrt(c * c + 2.0 * h)


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


RAYLEIGH_MOM = np.zeros(NSTR + 1)
RAYLEIGH_MOM[0], RAYLEIGH_MOM[2] = 1.0, 0.1


def layer(tau_scat_parts, tau_abs):
    """One layer (tau, ssa, moments) from its scattering parts [(tau, moments)] and its
    absorption depth; the moments are the scattering-weighted mean of the parts'."""
    scat = sum(t for t, _ in tau_scat_parts)
    tau = scat + tau_abs
    mom = sum(t * m for t, m in tau_scat_parts) / scat
    return (tau, scat / tau, mom)


def day_nodes(lat, doy):
    """(mu0, weight) of the 24-hour mean: weights sum to the daylight fraction's integral."""
    x, w = np.polynomial.legendre.leggauss(2 * NODES)
    decl = spencer_declination_rad(doy)
    phi = math.radians(lat)
    c = -math.tan(phi) * math.tan(decl)
    h0 = 0.0 if c >= 1.0 else (math.pi if c <= -1.0 else math.acos(c))
    a_, b_ = math.sin(phi) * math.sin(decl), math.cos(phi) * math.cos(decl)
    return [(a_ + b_ * math.cos(h0 * xi), h0 * wi / math.pi)
            for xi, wi in zip(x[NODES:], w[NODES:])]


def column_fluxes(case, lam, weights, with_aerosol):
    """24-hour-mean TOA up and surface net [W m-2] and TOA down of one column."""
    lat, (_, _, _, doy), aod, alpha, ssa, g, albedo, ozone, water, base, top = case
    rayleigh_mom = RAYLEIGH_MOM
    hg = np.array([g ** k for k in range(NSTR + 1)])
    at_top = pressure_ratio(top * 1000.0)
    at_base = pressure_ratio(base * 1000.0)
    share_upper, share_aer, share_lower = at_top, at_base - at_top, 1.0 - at_base
    elevated = base > 0.0
    water_aer = share_aer / (1.0 - at_top) if elevated else 1.0
    water_lower = 1.0 - water_aer
    tau_r = np.array([bodhaine(x) for x in lam])
    tau_a = aod * (lam / 0.55) ** -alpha
    ao, aw, au = gas_coefficients(lam)
    gases = ozone > 0.0 or water > 0.0  # ozone 0 and water 0: no gas absorption at all
    down = up = net = 0.0
    for mu0, wt in day_nodes(lat, doy):
        if mu0 <= 1e-6:
            continue
        z = math.degrees(math.acos(min(mu0, 1.0)))
        m = kasten_young(z)
        # Slant transmittances (Bird & Riordan eqs. 2-8 to 2-11) as vertical depths.
        t_o = np.exp(-ao * ozone * 1e-3 * ozone_airmass(z))
        x_w = aw * water * m
        t_w = np.exp(-0.2385 * x_w / (1.0 + 20.07 * x_w) ** 0.45)
        x_u = au * m if gases else 0.0 * au  # sea level: p = 1013.25 hPa
        t_u = np.exp(-1.41 * x_u / (1.0 + 118.3 * x_u) ** 0.45)
        tg_o, tg_w, tg_u = (-mu0 * np.log(t) for t in (t_o, t_w, t_u))
        for i in range(len(lam)):
            tr = tau_r[i]
            layers = [layer([(tr * share_upper, rayleigh_mom)],
                            tg_o[i] + tg_u[i] * share_upper)]
            parts = [(tr * share_aer, rayleigh_mom)]
            absorb = tg_w[i] * water_aer + tg_u[i] * share_aer
            if with_aerosol:
                parts.append((ssa * tau_a[i], hg))
                absorb += (1.0 - ssa) * tau_a[i]
            layers.append(layer(parts, absorb))
            if elevated:
                layers.append(layer([(tr * share_lower, rayleigh_mom)],
                                    tg_w[i] * water_lower + tg_u[i] * share_lower))
            f_up, f_net = toa_up_and_sfc_net(layers, mu0, albedo)
            inc = weights[i] * mu0 * wt
            down += inc
            up += inc * f_up
            net += inc * f_net
    return down, up, net


def main():
    lam, weights = g173()
    out = []
    clean_cache = {}
    for case in CASES:
        lat, (year, month, day, doy), aod, alpha, ssa, g, albedo, ozone, water, base, top = case
        key = (lat, doy, albedo, ozone, water, base, top)
        if key not in clean_cache:
            clean_cache[key] = column_fluxes(case, lam, weights, False)
        down, cup, cnet = clean_cache[key]
        _, aup, anet = column_fluxes(case, lam, weights, True)
        out.append([lat, year, month, day, aod, alpha, ssa, g, albedo, down,
                    cup - aup, anet - cnet, ozone, water, base, top])
    header = ["latitude_deg", "year", "month", "day", "aod_550", "angstrom", "ssa", "g",
              "albedo", "toa_down", "dre_toa", "dre_sfc", "ozone_du", "water_cm",
              "base_km", "top_km"]
    os.makedirs(FIXTURES, exist_ok=True)
    with open(os.path.join(FIXTURES, "disort_broadband.csv"), "w", newline="\n") as f:
        f.write(",".join(header) + "\n")
        for r in out:
            f.write(",".join(fmt(v) for v in r) + "\n")


if __name__ == "__main__":
    main()
