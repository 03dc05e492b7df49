"""Derive the shortwave band table of hazebook from the ASTM G173-03 spectrum.

Sources
-------
* ASTM G173-03 reference spectra, extraterrestrial (ETR) column, as shipped in the
  PyPI package pvlib (``pvlib/data/ASTMG173.csv``; 280-4000 nm; 0.5 nm steps to
  400 nm, 1 nm to 1700 nm, then 2, 3 and 5 nm steps).
* Bird, R. E. and Riordan, C. (1986), Simple solar spectral model for direct and
  diffuse irradiance on horizontal and tilted planes at the Earth's surface for
  cloudless atmospheres, J. Climate Appl. Meteor. 25, 87-97: the spectral
  absorption coefficients of ozone (ao, 1/atm-cm), water vapour (aw, 1/cm) and
  uniformly mixed gases (au), taken from the coefficient table of pvlib's
  ``pvlib.spectrum.spectrl2`` module (122 wavelengths, 300-4000 nm).

Outputs (deterministic, ``%.10g``)
-------
* ``src/physics/data/bands_g173.csv``: one row per band: index, lower and upper edge
  [um], irradiance-weighted centre wavelength [um], ETR irradiance in the band at 1 AU
  [W m-2] (trapezoid rule on the native grid, unscaled).
* ``src/physics/data/gas_subbands.csv``: the sub-wavelengths of each band. They are the
  wavelengths of the Bird & Riordan table (plus 280, 285, 290 and 295 nm, see below), the
  grid on which that model is defined and on which spectrl2 is integrated. Each
  sub-wavelength carries the weight W_j = integral over the band of E(lambda) h_j(lambda)
  d lambda, where E is the G173 ETR (trapezoid rule on its native grid) and h_j the
  piecewise-linear "hat" function of point j on the Bird & Riordan grid. The hats sum to
  one, so the weights of a band add up to its irradiance, and sum_j W_j T_j is the
  ETR-weighted band integral of the transmittance interpolated linearly between the
  model's wavelengths (as a trapezoid integration of the model's spectrum does). Columns:
  band index, wavelength [nm], weight [W m-2], ao, aw, au. Below 300 nm (outside the Bird &
  Riordan table) four points carry ozone extrapolated log-linearly with the 300-305 nm
  slope (a doubling every 5 nm; ozone absorption keeps rising towards the Hartley band
  maximum near 255 nm); water and mixed gases are zero there. Against the laboratory
  cross sections (Bass-Paur 1985, Serdyuchenko et al. 2014, from memory: about 7.5e-19,
  1.5e-18, 2.5e-18 and 3.9e-18 cm2 at 295, 290, 285 and 280 nm, i.e. 20, 40, 67 and
  105 (atm-cm)^-1 at 2.687e19 molecules cm-2 per atm-cm) the extrapolated 20.8, 43.4, 90
  and 188 (atm-cm)^-1 are right to about 10 % down to 290 nm and too high at 285 nm
  (x1.35) and 280 nm (x1.8), where the real cross section flattens towards the maximum.
  That does not matter for the fluxes: even 100 DU overhead gives a slant optical depth
  above 2 at 295 nm and above 4 at 290 nm, so the 280-300 nm band transmits almost only
  through its 300 nm end, as the surface UV-B cut-off near 295-300 nm (common practice)
  says it should.

Band edges
----------
31 bands from 0.28 to 4.0 um. Every edge is a point of the native grid, so the band
irradiances add up exactly to the trapezoid integral of the whole file. Bands are
20 nm wide from 280 to 500 nm and 25 nm to 600 nm, where Rayleigh (~lambda^-4) and
aerosol (Angstrom) extinction change fastest and most of the energy lies; 40 nm to
800 nm; then widening through the near infrared (60-100 nm to 1.04 um, then
0.12-1.0 um), where both extinctions are small and gas absorption dominates.

Run with: ``/work/main/.venv/bin/python tests/reference/derive_bands.py`` from the
crate root.
"""

import os

import numpy as np
import pandas as pd
import pvlib
from pvlib.spectrum.spectrl2 import _SPECTRL2_COEFFS

ROOT = os.path.abspath(os.path.join(os.path.dirname(__file__), "..", ".."))
DATA = os.path.join(ROOT, "src", "physics", "data")

EDGES_NM = [
    280, 300, 320, 340, 360, 380, 400, 420, 440, 460, 480, 500,
    525, 550, 575, 600, 640, 680, 720, 760, 800,
    860, 940, 1040, 1160, 1300, 1500, 1750, 2000, 2400, 3000, 4000,
]


def fmt(x):
    return "%.10g" % x


def main():
    path = os.path.join(os.path.dirname(pvlib.__file__), "data", "ASTMG173.csv")
    table = pd.read_csv(path, skiprows=1)
    wl = table["wavelength"].to_numpy(dtype=float)
    etr = table["extraterrestrial"].to_numpy(dtype=float)

    for edge in EDGES_NM:
        if not np.any(wl == edge):
            raise SystemExit("band edge %s nm is not a point of the G173 grid" % edge)
    if EDGES_NM[0] != wl[0] or EDGES_NM[-1] != wl[-1]:
        raise SystemExit("band edges must span the whole file")

    coeff_wl = _SPECTRL2_COEFFS["wavelength"]
    ao_tab = _SPECTRL2_COEFFS["ozone_absorption"]
    slope = np.log(ao_tab[0] / ao_tab[1]) / (coeff_wl[1] - coeff_wl[0])
    extra = np.array([280.0, 285.0, 290.0, 295.0])
    points = np.concatenate([extra, coeff_wl])
    ao_pts = np.concatenate([ao_tab[0] * np.exp(slope * (coeff_wl[0] - extra)), ao_tab])
    aw_pts = np.concatenate([np.zeros(4), _SPECTRL2_COEFFS["water_vapor_absorption"]])
    au_pts = np.concatenate([np.zeros(4), _SPECTRL2_COEFFS["mixed_absorption"]])
    if points[-1] != wl[-1] or points[0] != wl[0]:
        raise SystemExit("sub-wavelength grid must span the G173 file")

    # Hat-function weights of each sub-wavelength inside each band.
    band, lam, weight, ao, aw, au = [], [], [], [], [], []
    eye = np.eye(len(points))
    for b in range(len(EDGES_NM) - 1):
        sel = (wl >= EDGES_NM[b]) & (wl <= EDGES_NM[b + 1])
        x, e = wl[sel], etr[sel]
        for j in range(len(points)):
            w = float(np.trapezoid(e * np.interp(x, points, eye[j]), x))
            if w > 0.0:
                band.append(b)
                lam.append(points[j])
                weight.append(w)
                ao.append(ao_pts[j])
                aw.append(aw_pts[j])
                au.append(au_pts[j])
    band, lam, weight = np.array(band), np.array(lam), np.array(weight)

    total = float(np.sum(weight))
    with open(os.path.join(DATA, "bands_g173.csv"), "w", newline="\n") as f:
        f.write("# ASTM G173-03 extraterrestrial spectrum (pvlib %s data/ASTMG173.csv) "
                "in shortwave bands; written by tests/reference/derive_bands.py\n"
                % pvlib.__version__)
        f.write("# total_wm2=%s\n" % fmt(total))
        f.write("band,lower_um,upper_um,center_um,irradiance_wm2\n")
        for b in range(len(EDGES_NM) - 1):
            sel = band == b
            irr = float(np.sum(weight[sel]))
            centre = float(np.sum(weight[sel] * lam[sel]) / irr) / 1000.0
            f.write(",".join([str(b), fmt(EDGES_NM[b] / 1000.0), fmt(EDGES_NM[b + 1] / 1000.0),
                              fmt(centre), fmt(irr)]) + "\n")

    with open(os.path.join(DATA, "gas_subbands.csv"), "w", newline="\n") as f:
        f.write("# Sub-wavelengths of the bands: Bird & Riordan (1986) wavelengths and "
                "coefficients (pvlib %s spectrl2) with G173 hat-function weights; written by "
                "tests/reference/derive_bands.py\n" % pvlib.__version__)
        f.write("band,wavelength_nm,weight_wm2,ozone_per_atm_cm,water_per_cm,mixed\n")
        for i in range(len(lam)):
            f.write(",".join([str(int(band[i])), fmt(lam[i]), fmt(weight[i]),
                              fmt(ao[i]), fmt(aw[i]), fmt(au[i])]) + "\n")

    print("bands: %d, sub-wavelengths: %d, total ETR 280-4000 nm: %s W m-2"
          % (len(EDGES_NM) - 1, len(lam), fmt(total)))


if __name__ == "__main__":
    main()
