"""A pandas + python-calamine + numpy + xlsxwriter pipeline for the speed comparison.

It reads the invented network workbook written by
``cargo run --release --example network_workbook -- FILE ROWS`` (sheet ``observations``:
site, time_utc, latitude, longitude, AOD 500 nm, Angstrom 440-870, SSA 550 nm, g 550 nm,
albedo) and does the same amount of work as hazebook's default run, vectorised in numpy:

* 31 shortwave bands of the ASTM G173-03 extraterrestrial spectrum, read from hazebook's own
  band table (``src/physics/data/bands_g173.csv``) and scaled to 1361 W m^-2; band-effective
  Rayleigh depths (Bodhaine et al. 1999, eq. 30, continued as lambda^-4 beyond 1 um) and
  ozone, water-vapour and mixed-gas depths (Bird & Riordan 1986, vertical path, default
  300 DU and 1.5 cm) from the sub-wavelengths of ``src/physics/data/gas_subbands.csv``;
* aerosol optical depth per band by Angstrom extrapolation from 500 nm, with SSA and g of
  550 nm in every band;
* two layers over a Lambertian surface: aerosol mixed with the lowest 2 km of the Rayleigh
  column (about 22 %), and a clean layer above with the rest of the Rayleigh column and the
  gases; each solved by the delta-Eddington two-stream (Joseph et al. 1976, Meador & Weaver
  1980) for the beam and for diffuse light, combined by the adding equations;
* the instantaneous value at the row's solar zenith (NOAA / Spencer 1971 declination and
  equation of time, Earth-Sun distance) and the 24-hour mean from 12 Gauss-Legendre nodes in
  hour angle between sunrise and sunset, each with and without aerosol, giving the direct
  radiative effect (DRE) at the top of the atmosphere and at the surface;
* a formatted 17-column results sheet written with xlsxwriter (header format, number formats,
  column widths, frozen header, autofilter) in constant-memory mode.

It is a benchmark, not a reference: its numbers are close to hazebook's but are not meant to
match them (simpler solar position, band-mean gas depths on the vertical path, SSA and g flat
across bands, two layers instead of hazebook's column), and nothing checks them. What it
matches is the amount of work: the same rows, bands, nodes, layers and cases.

Usage: python benches/python_pipeline.py INPUT.xlsx OUTPUT.xlsx
Prints the time of each stage (read, solar position, physics, write) and the peak RSS.
"""

import os
import resource
import sys
import time

import numpy as np
import pandas as pd
import xlsxwriter

HERE = os.path.dirname(os.path.abspath(__file__))
DATA = os.path.join(HERE, "..", "src", "physics", "data")
SOLAR_CONSTANT = 1361.0
STANDARD_PRESSURE = 1013.25
OZONE_ATM_CM = 0.300
WATER_CM = 1.5
AEROSOL_LAYER_RAYLEIGH_FRACTION = 1.0 - np.exp(-2.0 / 8.0)
DIURNAL_NODES = 12
CHUNK = 8192


def band_table():
    """Band centres [um], scaled irradiances [W m^-2] and vertical Rayleigh and gas depths."""
    bands = pd.read_csv(os.path.join(DATA, "bands_g173.csv"), comment="#")
    subs = pd.read_csv(os.path.join(DATA, "gas_subbands.csv"), comment="#")
    centre = bands["center_um"].to_numpy()
    irr = bands["irradiance_wm2"].to_numpy()
    irr = irr * SOLAR_CONSTANT / irr.sum()

    lam = subs["wavelength_nm"].to_numpy() / 1000.0

    def eq30(x):
        x2 = x * x
        return (0.0021520 * (1.0455996 - 341.29061 / x2 - 0.90230850 * x2)
                / (1.0 + 0.0027059889 / x2 - 85.968563 * x2))

    tau_r = np.where(lam > 1.0, eq30(1.0) * lam ** -4.0, eq30(np.minimum(lam, 1.0)))
    ko = subs["ozone_per_atm_cm"].to_numpy()
    kw = subs["water_per_cm"].to_numpy()
    ku = subs["mixed"].to_numpy()
    tau_o = ko * OZONE_ATM_CM
    tau_w = 0.2385 * kw * WATER_CM / (1.0 + 20.07 * kw * WATER_CM) ** 0.45
    tau_u = 1.41 * ku / (1.0 + 118.93 * ku) ** 0.45
    w = subs["weight_wm2"].to_numpy()
    b = subs["band"].to_numpy()
    n = len(centre)

    def band_mean_depth(tau):
        t = np.bincount(b, weights=w * np.exp(-tau), minlength=n)
        tot = np.bincount(b, weights=w, minlength=n)
        return -np.log(t / tot)

    return centre, irr, band_mean_depth(tau_r), band_mean_depth(tau_o + tau_w + tau_u)


def solar_geometry(times, lat_deg, lon_deg):
    """Declination, equation of time [min], Earth-Sun factor and cos zenith (NOAA/Spencer)."""
    t = times.to_numpy().astype("datetime64[s]")
    day_start = t.astype("datetime64[D]")
    doy = (day_start - t.astype("datetime64[Y]").astype("datetime64[D]")).astype(np.float64)
    hours = (t - day_start).astype(np.float64) / 3600.0
    year = t.astype("datetime64[Y]").astype(np.int64) + 1970
    ndays = np.where((year % 4 == 0) & ((year % 100 != 0) | (year % 400 == 0)), 366.0, 365.0)
    gam = 2.0 * np.pi / ndays * (doy + (hours - 12.0) / 24.0)
    eot = 229.18 * (0.000075 + 0.001868 * np.cos(gam) - 0.032077 * np.sin(gam)
                    - 0.014615 * np.cos(2 * gam) - 0.040849 * np.sin(2 * gam))
    decl = (0.006918 - 0.399912 * np.cos(gam) + 0.070257 * np.sin(gam)
            - 0.006758 * np.cos(2 * gam) + 0.000907 * np.sin(2 * gam)
            - 0.002697 * np.cos(3 * gam) + 0.00148 * np.sin(3 * gam))
    dist = (1.000110 + 0.034221 * np.cos(gam) + 0.001280 * np.sin(gam)
            + 0.000719 * np.cos(2 * gam) + 0.000077 * np.sin(2 * gam))
    tst = hours * 60.0 + eot + 4.0 * lon_deg
    ha = np.deg2rad(tst / 4.0 - 180.0)
    lat = np.deg2rad(lat_deg)
    mu0 = np.sin(lat) * np.sin(decl) + np.cos(lat) * np.cos(decl) * np.cos(ha)
    return decl, dist, mu0


def delta_eddington(tau, ssa, g):
    """Delta-scaled depth, SSA and Eddington gamma1, gamma2 and the diffuse R, T."""
    f = g * g
    tau_s = (1.0 - ssa * f) * tau
    ssa_s = np.minimum(ssa * (1.0 - f) / (1.0 - ssa * f), 1.0 - 1e-9)
    g_s = g / (1.0 + g)
    g1 = (7.0 - ssa_s * (4.0 + 3.0 * g_s)) / 4.0
    g2 = -(1.0 - ssa_s * (4.0 - 3.0 * g_s)) / 4.0
    k = np.sqrt(np.maximum(g1 * g1 - g2 * g2, 1e-18))
    e2 = np.exp(-2.0 * k * tau_s)
    den = k * (1.0 + e2) + g1 * (1.0 - e2)
    r_dif = g2 * (1.0 - e2) / den
    t_dif = 2.0 * k * np.sqrt(e2) / den
    return tau_s, ssa_s, g_s, g1, g2, k, e2, r_dif, t_dif


def beam(layer, mu0):
    """Beam reflectance, diffuse transmittance and direct transmission at cos zenith mu0."""
    tau_s, ssa_s, g_s, g1, g2, k, e2, _, _ = layer
    mu0 = mu0[:, None]
    km = k * mu0
    mu0 = np.where(np.abs(1.0 - km) < 1e-6, mu0 * (1.0 + 2e-6), mu0)
    km = k * mu0
    g3 = (2.0 - 3.0 * g_s * mu0) / 4.0
    g4 = 1.0 - g3
    a1 = g1 * g4 + g2 * g3
    a2 = g1 * g3 + g2 * g4
    d = np.exp(-tau_s / mu0)
    e = np.sqrt(e2)
    den = (1.0 - km * km) * ((k + g1) + (k - g1) * e2)
    r = ssa_s * ((1.0 - km) * (a2 + k * g3) - (1.0 + km) * (a2 - k * g3) * e2
                 - 2.0 * k * (g3 - a2 * mu0) * d * e) / den
    t = (d - ssa_s * d * ((1.0 + km) * (a1 + k * g4) - (1.0 - km) * (a1 - k * g4) * e2) / den
         + ssa_s * 2.0 * k * (g4 + a1 * mu0) * e / den)
    # t is the total transmission (Meador & Weaver's form); the diffuse part is t - d.
    return np.maximum(r, 0.0), np.maximum(t - d, 0.0), d


def net_fluxes(top, low, albedo, mu0):
    """Net downward flux at TOA and absorbed at the surface, fractions of mu0 S, per band."""
    r1b, t1b, d1 = beam(top, mu0)
    r2b, t2b, d2 = beam(low, mu0)
    r1d, t1d = top[7], top[8]
    r2d, t2d = low[7], low[8]
    a = albedo[:, None]
    m2 = 1.0 / (1.0 - a * r2d)
    low_dif = r2d + t2d * t2d * a * m2
    low_dir = r2b + t2d * a * (d2 + t2b) * m2
    fd = (t1b + d1 * low_dir * r1d) / (1.0 - r1d * low_dif)
    fu = d1 * low_dir + fd * low_dif
    toa_up = r1b + t1d * fu
    sfc_down = (d1 * d2 + d1 * t2b + fd * t2d) * m2
    return 1.0 - toa_up, (1.0 - a) * sfc_down


def dre(top, low_aer, low_clean, albedo, mu0, s_band):
    """Broadband DRE at TOA and surface [W m^-2] at cos zenith mu0 (0 where mu0 <= 0)."""
    lit = mu0 > 0.0
    m = np.where(lit, mu0, 0.5)
    toa_a, sfc_a = net_fluxes(top, low_aer, albedo, m)
    toa_c, sfc_c = net_fluxes(top, low_clean, albedo, m)
    w = s_band * (m * lit)[:, None]
    return ((toa_a - toa_c) * w).sum(axis=1), ((sfc_a - sfc_c) * w).sum(axis=1)


def physics(df, decl, dist, mu0):
    centre, irr, tau_r, tau_gas = band_table()
    n = len(df)
    out = np.zeros((n, 4))
    x, wq = np.polynomial.legendre.leggauss(DIURNAL_NODES)
    aod = df["AOD 500 nm"].to_numpy(float)
    alpha = df["Angstrom 440-870"].to_numpy(float)
    ssa = df["SSA 550 nm"].to_numpy(float)
    asym = df["g 550 nm"].to_numpy(float)
    alb = df["albedo"].to_numpy(float)
    lat = np.deg2rad(df["latitude"].to_numpy(float))
    # Clean upper layer: Rayleigh above the aerosol layer plus the gases (absorbing).
    tau_up = tau_r * (1.0 - AEROSOL_LAYER_RAYLEIGH_FRACTION) + tau_gas
    ssa_up = tau_r * (1.0 - AEROSOL_LAYER_RAYLEIGH_FRACTION) / tau_up
    tau_rl = tau_r * AEROSOL_LAYER_RAYLEIGH_FRACTION
    for s in range(0, n, CHUNK):
        e = min(s + CHUNK, n)
        rows = e - s
        ones = np.ones((rows, 1))
        top = delta_eddington(tau_up * ones, ssa_up * ones, 0.0 * ones)
        clean = delta_eddington(tau_rl * ones, ones, 0.0 * ones)
        tau_a = aod[s:e, None] * (centre / 0.5) ** (-alpha[s:e, None])
        tau_l = tau_a + tau_rl
        ssa_l = (tau_a * ssa[s:e, None] + tau_rl) / tau_l
        g_l = tau_a * ssa[s:e, None] * asym[s:e, None] / (tau_l * ssa_l)
        aer = delta_eddington(tau_l, ssa_l, g_l)
        s_band = irr * dist[s:e, None]
        a = alb[s:e]
        out[s:e, 0], out[s:e, 1] = dre(top, aer, clean, a, mu0[s:e], s_band)
        # 24-hour mean: Gauss-Legendre nodes in hour angle between sunrise and sunset.
        tt = -np.tan(lat[s:e]) * np.tan(decl[s:e])
        ws = np.arccos(np.clip(tt, -1.0, 1.0))
        sl, cl = np.sin(lat[s:e]), np.cos(lat[s:e])
        sd, cd = np.sin(decl[s:e]), np.cos(decl[s:e])
        for xi, wi in zip(x, wq):
            m = sl * sd + cl * cd * np.cos(ws * xi)
            t_, f_ = dre(top, aer, clean, a, m, s_band)
            out[s:e, 2] += wi * ws / (2.0 * np.pi) * t_
            out[s:e, 3] += wi * ws / (2.0 * np.pi) * f_
    return out


def write(path, df, mu0, res):
    wb = xlsxwriter.Workbook(path, {"constant_memory": True})
    ws = wb.add_worksheet("Results")
    head = wb.add_format({"bold": True, "bg_color": "#DDEBF7", "border": 1,
                          "text_wrap": True, "valign": "top"})
    date = wb.add_format({"num_format": "yyyy-mm-dd hh:mm"})
    f2 = wb.add_format({"num_format": "0.00"})
    f3 = wb.add_format({"num_format": "0.000"})
    f1 = wb.add_format({"num_format": "0.0"})
    cols = [
        ("site", 14, None), ("time (UTC)", 17, date), ("latitude [°]", 9, f2),
        ("longitude [°]", 10, f2), ("AOD 500 nm", 9, f3), ("Ångström exponent", 10, f3),
        ("SSA 550 nm", 9, f3), ("g 550 nm", 9, f3), ("surface albedo", 9, f3),
        ("solar zenith [°]", 9, f1), ("DRE TOA [W m⁻²]", 11, f2),
        ("DRE surface [W m⁻²]", 11, f2), ("DRE atmosphere [W m⁻²]", 12, f2),
        ("24-h DRE TOA [W m⁻²]", 11, f2), ("24-h DRE surface [W m⁻²]", 12, f2),
        ("24-h DRE atmosphere [W m⁻²]", 13, f2), ("24-h TOA efficiency [W m⁻² τ⁻¹]", 13, f2),
    ]
    for c, (name, width, fmt) in enumerate(cols):
        ws.set_column(c, c, width)
        ws.write_string(0, c, name, head)
    ws.freeze_panes(1, 0)
    n = len(df)
    ws.autofilter(0, 0, n, len(cols) - 1)
    zen = np.degrees(np.arccos(np.clip(mu0, -1.0, 1.0)))
    t = df["time_utc"].dt.to_pydatetime()
    numeric = np.column_stack([
        df["latitude"].to_numpy(float), df["longitude"].to_numpy(float),
        df["AOD 500 nm"].to_numpy(float), df["Angstrom 440-870"].to_numpy(float),
        df["SSA 550 nm"].to_numpy(float), df["g 550 nm"].to_numpy(float),
        df["albedo"].to_numpy(float), zen, res[:, 0], res[:, 1], res[:, 0] - res[:, 1],
        res[:, 2], res[:, 3], res[:, 2] - res[:, 3],
        res[:, 2] / df["AOD 500 nm"].to_numpy(float),
    ]).tolist()
    fmts = [c[2] for c in cols[2:]]
    sites = df["site"].tolist()
    for r in range(n):
        ws.write_string(r + 1, 0, sites[r])
        ws.write_datetime(r + 1, 1, t[r], date)
        for c, (v, fmt) in enumerate(zip(numeric[r], fmts), start=2):
            ws.write_number(r + 1, c, v, fmt)
    wb.close()


def main():
    if len(sys.argv) != 3:
        sys.exit("usage: python_pipeline.py INPUT.xlsx OUTPUT.xlsx")
    src, dst = sys.argv[1], sys.argv[2]
    stages = []
    t0 = time.perf_counter()
    df = pd.read_excel(src, sheet_name="observations", engine="calamine")
    df["time_utc"] = pd.to_datetime(df["time_utc"])
    stages.append(("read", time.perf_counter()))
    decl, dist, mu0 = solar_geometry(df["time_utc"], df["latitude"].to_numpy(float),
                                     df["longitude"].to_numpy(float))
    stages.append(("solar position", time.perf_counter()))
    res = physics(df, decl, dist, mu0)
    stages.append(("physics", time.perf_counter()))
    write(dst, df, mu0, res)
    stages.append(("write", time.perf_counter()))
    prev = t0
    for name, t in stages:
        print(f"{name:>15}: {t - prev:7.2f} s")
        prev = t
    print(f"{'total':>15}: {prev - t0:7.2f} s for {len(df)} rows")
    rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    print(f"{'peak RSS':>15}: {rss / 1024:7.0f} MB")
    print(f"{'mean 24-h DRE':>15}: TOA {res[:, 2].mean():.2f}, surface {res[:, 3].mean():.2f} W m-2")


if __name__ == "__main__":
    main()
