"""Reference numbers from pvlib for the solar-geometry and spectral checks of hazebook.

Writes (deterministic, ``%.10g``):

* ``tests/fixtures/solar_zenith.csv``: ``pvlib.solarposition.spa_python`` (NREL SPA, Reda &
  Andreas 2004) topocentric zenith angle without refraction (its ``zenith`` column, not
  ``apparent_zenith``) for 42 places and times: both hemispheres, high latitudes, the
  date line (+-180 deg), altitudes from sea level to 5 km, sun up and down. ``delta_t`` is
  pvlib's own estimate (``pvlib.spa.calculate_deltat``); it only moves the ephemeris and
  changes the zenith by ~1e-5 deg per second of difference.
* ``tests/fixtures/spectrl2_direct.csv``: broadband direct-beam transmittance from
  ``pvlib.spectrum.spectrl2`` (Bird & Riordan 1986), i.e. the trapezoid integral over its
  300-4000 nm grid of the direct-normal spectrum ``dni`` divided by the same integral of its
  extraterrestrial spectrum ``dni_extra`` (the Earth-Sun factor cancels), for a grid of
  AOD(500 nm), Angstrom exponent, ozone, water vapour, pressure and zenith angle <= 80 deg.
  pvlib's spectrl2 uses a single Angstrom law referenced to 500 nm
  (``angstrom_aod_at_lambda(aerosol_turbidity_500nm, 500, alpha, wavelength)``), which is
  the law of hazebook, so ``aerosol_turbidity_500nm`` = AOD(500) and ``alpha`` = the
  Angstrom exponent. The relative air mass is Kasten & Young (1989), as in hazebook;
  ozone is converted from DU to atm-cm (/1000) and pressure from hPa to Pa.
* ``tests/fixtures/spectrl2_ozone.csv``: the spectral ozone transmittance ``To`` of
  ``pvlib.spectrum.spectrl2`` (Bird & Riordan 1986, eqs. 2-9 and 2-10: ozone air mass with
  the ozone maximum at 22 km) at a few wavelengths of its grid, for ozone columns and zenith
  angles up to 89 deg, with the ozone coefficient it used; checks the ozone path length.
* ``tests/fixtures/spectrl2_global.csv``: broadband global-horizontal and diffuse
  transmittance of ``pvlib.spectrum.spectrl2`` (trapezoid integrals of ``ghi = dni cos z +
  dhi`` and of ``dhi`` over its grid, divided by the integral of ``dni_extra`` cos z) for a
  clean sea-level sky (AOD(500) 0.1, Angstrom 1.3, constant SSA 0.92, g 0.7, 1.4 cm water,
  300 DU, ground albedo 0.2) at zenith 0, 30 and 60 deg.
* ``tests/fixtures/astm_g173_integral.csv``: trapezoid integral of the extraterrestrial
  column of pvlib's ASTM G173-03 table over its whole range (280-4000 nm) and over
  300-4000 nm.

Run with: ``/work/main/.venv/bin/python tests/reference/pvlib_reference.py`` from the
crate root.
"""

import itertools
import os

import numpy as np
import pandas as pd
import pvlib

ROOT = os.path.abspath(os.path.join(os.path.dirname(__file__), "..", ".."))
FIXTURES = os.path.join(ROOT, "tests", "fixtures")


def fmt(x):
    return "%.10g" % x


# time (UTC), latitude, longitude, altitude [m]
ZENITH_CASES = [
    ("2024-06-21T12:00:00", 23.44, 0.0, 0.0),
    ("2024-03-20T03:06:00", 0.0, 180.0, 0.0),
    ("2024-12-21T12:00:00", -23.44, 0.0, 0.0),
    ("2023-01-15T06:30:00", 78.22, 15.63, 10.0),
    ("2023-06-15T23:59:59", 78.22, 15.63, 10.0),
    ("2023-06-15T11:00:00", 78.22, 15.63, 10.0),
    ("2023-12-15T00:00:00", -77.85, 166.67, 24.0),
    ("2023-12-15T12:00:00", -77.85, 166.67, 24.0),
    ("2022-09-23T10:00:00", -89.98, -139.27, 2835.0),
    ("2022-04-10T18:45:00", 89.5, 0.0, 0.0),
    ("2021-07-04T17:30:00", 39.74, -105.18, 1829.0),
    ("2021-07-04T02:30:00", 39.74, -105.18, 1829.0),
    ("2020-02-29T09:15:30", 52.21, 0.12, 15.0),
    ("2020-10-31T14:00:00", 48.21, 16.37, 190.0),
    ("2019-05-05T05:05:05", 35.68, 139.77, 40.0),
    ("2019-11-11T22:11:00", -33.87, 151.21, 58.0),
    ("2018-08-08T08:00:00", -1.29, 36.82, 1795.0),
    ("2018-01-01T00:00:00", 0.0, -180.0, 0.0),
    ("2018-01-01T00:00:00", 0.0, 179.999, 0.0),
    ("2017-03-15T16:20:00", 19.54, -155.58, 3397.0),
    ("2017-09-01T20:00:00", -16.5, -68.15, 3640.0),
    ("2016-06-01T06:00:00", 27.99, 86.93, 5000.0),
    ("2016-12-01T13:30:00", 28.61, 77.21, 216.0),
    ("2015-07-15T10:00:00", 64.13, -21.94, 30.0),
    ("2015-04-20T19:45:00", -54.8, -68.3, 10.0),
    ("2014-10-10T15:00:00", 13.5, 2.1, 210.0),
    ("2014-02-02T11:11:11", -34.6, -58.38, 25.0),
    ("2013-03-03T03:03:03", 1.35, 103.82, 15.0),
    ("2012-06-30T23:59:00", 71.29, -156.79, 11.0),
    ("2012-12-31T12:00:00", -69.0, 39.58, 18.0),
    ("2025-05-20T14:00:00", 44.65, -63.57, 50.0),
    ("2025-08-15T07:45:00", 31.0, 29.9, 5.0),
    ("2025-11-03T17:10:00", -12.05, -77.04, 150.0),
    ("2026-01-20T04:00:00", 60.17, 24.94, 20.0),
    ("2026-04-01T12:00:00", -45.0, 170.0, 400.0),
    ("2026-07-01T00:00:00", 45.0, -170.0, 0.0),
    ("2010-09-21T12:00:00", 66.56, 0.0, 0.0),
    ("2030-06-21T00:00:00", -66.56, 180.0, 0.0),
    ("2000-01-01T12:00:00", 51.48, 0.0, 46.0),
    ("1995-07-20T09:30:00", -25.75, 28.19, 1340.0),
    ("2024-02-10T15:00:00", 40.0, -3.7, 660.0),
    ("2024-10-05T21:00:00", -3.1, -60.0, 90.0),
]


def solar_zenith():
    rows = []
    for time, lat, lon, alt in ZENITH_CASES:
        idx = pd.DatetimeIndex([pd.Timestamp(time, tz="UTC")])
        delta_t = float(pvlib.spa.calculate_deltat(idx.year, idx.month)[0])
        pos = pvlib.solarposition.spa_python(idx, lat, lon, altitude=alt, delta_t=delta_t,
                                             how="numpy")
        rows.append([time + "Z", fmt(lat), fmt(lon), fmt(alt), fmt(delta_t),
                     fmt(float(pos["zenith"].iloc[0]))])
    with open(os.path.join(FIXTURES, "solar_zenith.csv"), "w", newline="\n") as f:
        f.write("time_utc,latitude_deg,longitude_deg,altitude_m,delta_t_s,zenith_deg\n")
        for r in rows:
            f.write(",".join(r) + "\n")


def spectrl2_direct():
    aods = [0.02, 0.2, 0.8]
    alphas = [0.3, 1.3, 2.2]
    ozones = [220.0, 380.0]
    waters = [0.3, 4.0]
    pressures = [1013.25, 800.0]
    zeniths = [0.0, 40.0, 60.0, 70.0, 80.0]
    rows = []
    for aod, alpha, o3, w, p, z in itertools.product(aods, alphas, ozones, waters,
                                                     pressures, zeniths):
        am = float(pvlib.atmosphere.get_relative_airmass(z, model="kastenyoung1989"))
        spec = pvlib.spectrum.spectrl2(
            apparent_zenith=z, aoi=z, surface_tilt=0.0, ground_albedo=0.2,
            surface_pressure=p * 100.0, relative_airmass=am, precipitable_water=w,
            ozone=o3 / 1000.0, aerosol_turbidity_500nm=aod, dayofyear=172, alpha=alpha)
        wl = spec["wavelength"]
        dni = np.asarray(spec["dni"]).reshape(-1)
        etr = np.asarray(spec["dni_extra"]).reshape(-1)
        t = float(np.trapezoid(dni, wl) / np.trapezoid(etr, wl))
        rows.append([fmt(aod), fmt(alpha), fmt(o3), fmt(w), fmt(p), fmt(z), fmt(am), fmt(t)])
    with open(os.path.join(FIXTURES, "spectrl2_direct.csv"), "w", newline="\n") as f:
        f.write("aod_500,angstrom,ozone_du,water_cm,pressure_hpa,zenith_deg,airmass,"
                "direct_transmittance\n")
        for r in rows:
            f.write(",".join(r) + "\n")


def spectrl2_ozone():
    from pvlib.spectrum.spectrl2 import _SPECTRL2_COEFFS, _spectrl2_transmittances

    coeff_wl = _SPECTRL2_COEFFS["wavelength"]
    picks = [i for i, wl in enumerate(coeff_wl) if wl in (310.0, 320.0, 593.0)]
    rows = []
    for o3 in [220.0, 380.0]:
        for z in [0.0, 30.0, 60.0, 70.0, 80.0, 85.0, 89.0]:
            am = float(pvlib.atmosphere.get_relative_airmass(z, model="kastenyoung1989"))
            out = _spectrl2_transmittances(
                np.array([z]), np.array([am]), np.array([101325.0]), np.array([1.0]),
                np.array([o3 / 1000.0]), np.zeros((122, 1)), np.zeros((122, 1)),
                np.array([172]))
            ozone_t = np.asarray(out[4])
            for i in picks:
                rows.append([fmt(o3), fmt(z), fmt(coeff_wl[i]),
                             fmt(_SPECTRL2_COEFFS["ozone_absorption"][i]),
                             fmt(float(ozone_t[i, 0]))])
    with open(os.path.join(FIXTURES, "spectrl2_ozone.csv"), "w", newline="\n") as f:
        f.write("ozone_du,zenith_deg,wavelength_nm,ozone_per_atm_cm,ozone_transmittance\n")
        for r in rows:
            f.write(",".join(r) + "\n")


def spectrl2_global():
    rows = []
    for z in [0.0, 30.0, 60.0]:
        am = float(pvlib.atmosphere.get_relative_airmass(z, model="kastenyoung1989"))
        spec = pvlib.spectrum.spectrl2(
            apparent_zenith=z, aoi=z, surface_tilt=0.0, ground_albedo=0.2,
            surface_pressure=101325.0, relative_airmass=am, precipitable_water=1.4,
            ozone=0.3, aerosol_turbidity_500nm=0.1, dayofyear=172, alpha=1.3,
            scattering_albedo_400nm=0.92, wavelength_variation_factor=0.0,
            aerosol_asymmetry_factor=0.7)
        wl = spec["wavelength"]
        cz = np.cos(np.radians(z))
        etr = float(np.trapezoid(np.asarray(spec["dni_extra"]).reshape(-1), wl)) * cz
        dni = np.asarray(spec["dni"]).reshape(-1)
        dhi = np.asarray(spec["dhi"]).reshape(-1)
        ghi = float(np.trapezoid(dni * cz + dhi, wl))
        rows.append([fmt(z), fmt(ghi / etr), fmt(float(np.trapezoid(dhi, wl)) / etr)])
    with open(os.path.join(FIXTURES, "spectrl2_global.csv"), "w", newline="\n") as f:
        f.write("zenith_deg,global_transmittance,diffuse_transmittance\n")
        for r in rows:
            f.write(",".join(r) + "\n")


def g173_integral():
    spectra = pvlib.spectrum.get_reference_spectra(standard="ASTM G173-03")
    wl = spectra.index.to_numpy(dtype=float)
    etr = spectra["extraterrestrial"].to_numpy(dtype=float)
    sel = wl >= 300.0
    with open(os.path.join(FIXTURES, "astm_g173_integral.csv"), "w", newline="\n") as f:
        f.write("lower_nm,upper_nm,etr_integral_wm2\n")
        f.write("%s,%s,%s\n" % (fmt(wl[0]), fmt(wl[-1]), fmt(float(np.trapezoid(etr, wl)))))
        f.write("300,%s,%s\n" % (fmt(wl[-1]), fmt(float(np.trapezoid(etr[sel], wl[sel])))))


def main():
    os.makedirs(FIXTURES, exist_ok=True)
    solar_zenith()
    spectrl2_direct()
    spectrl2_ozone()
    spectrl2_global()
    g173_integral()


if __name__ == "__main__":
    main()
