"""Check hazebook's NetCDF side output as its users read it: with xarray.

Usage: check_netcdf.py RESULTS.nc RESULTS.parquet

RESULTS.nc and RESULTS.summary.nc (beside it) come from `hazebook run ... --side-output netcdf`,
RESULTS.parquet from the same run with `--side-output parquet`. The script checks, and exits
non-zero with a message when something does not hold:

- the files open in xarray with CF decoding: `time` decodes to datetime64 and equals the
  Parquet `time_utc`; fill values become NaN where the Parquet column is null;
- every numeric Parquet column equals the NetCDF variable of the same name bit for bit
  (latitude, longitude and altitude through `station_index`), and the site names match;
- the flags decode through `flag_masks` / `flag_meanings` to the Parquet `flags` text;
- every `units` attribute parses in UDUNITS (cf-units), and a variable with a
  `standard_name` has a name of the CF standard-name table (the copy bundled with the pinned
  compliance-checker, version given in its header) and units convertible to its canonical
  units; standard-name modifiers are the CF ones;
- the CF 1.8 rules of the discrete sampling geometry used (CF 1.8 §9, Appendix H.2.5 and
  H.2.1): `featureType`, one `cf_role = "timeseries_id"` variable on the instance dimension,
  `instance_dimension` on the index variable, coordinates attributes naming existing
  variables, `Conventions = "CF-1.8"`, global `history`, `references`, `source`, `title`;
- the summary file's monthly means, counts and extremes equal those recomputed here from
  the Parquet rows with pandas.
"""

import sys
import xml.etree.ElementTree as ET
from pathlib import Path

import cf_units
import compliance_checker
import numpy as np
import pandas as pd
import xarray as xr

FAILURES = []


def check(cond, message):
    if not cond:
        FAILURES.append(message)


def standard_name_table():
    path = Path(compliance_checker.__file__).parent / "data" / "cf-standard-name-table.xml"
    root = ET.parse(path).getroot()
    version = root.findtext("version_number")
    table = {}
    for e in root.iter("entry"):
        table[e.get("id")] = e.findtext("canonical_units") or ""
    return version, table


MODIFIERS = {"detection_minimum", "number_of_observations", "standard_error", "status_flag"}


def check_cf_attributes(ds, table, label):
    for name, var in ds.variables.items():
        units = var.attrs.get("units", var.encoding.get("units"))
        if units is not None:
            try:
                unit = cf_units.Unit(units, calendar=var.encoding.get("calendar"))
            except ValueError as e:
                check(False, f"{label} {name}: units {units!r} do not parse in UDUNITS: {e}")
                continue
        sn = var.attrs.get("standard_name")
        if sn is None:
            continue
        parts = sn.split(" ")
        base = parts[0]
        check(base in table, f"{label} {name}: standard_name {base!r} not in the CF table")
        check(
            len(parts) == 1 or (len(parts) == 2 and parts[1] in MODIFIERS),
            f"{label} {name}: bad standard_name modifier in {sn!r}",
        )
        if base in table and units is not None and len(parts) == 1:
            canonical = cf_units.Unit(table[base])
            check(
                unit.is_convertible(canonical) or (unit.is_time_reference() and base == "time"),
                f"{label} {name}: units {units!r} not convertible to {table[base]!r} of {base}",
            )
        if len(parts) == 2 and parts[1] == "number_of_observations":
            check(units == "1", f"{label} {name}: a count has units 1")
    for name, var in ds.variables.items():
        for c in var.attrs.get("coordinates", "").split():
            check(c in ds.variables, f"{label} {name}: coordinate {c!r} is not a variable")


def check_globals(ds, label):
    check(ds.attrs.get("Conventions") == "CF-1.8", f"{label}: Conventions is not CF-1.8")
    check(ds.attrs.get("featureType") == "timeSeries", f"{label}: featureType is not timeSeries")
    for a in ("title", "history", "source", "references"):
        check(bool(ds.attrs.get(a)), f"{label}: global attribute {a} missing")
    check("sha256" in ds.attrs.get("history", ""), f"{label}: history has no input SHA-256")
    ids = [n for n, v in ds.variables.items() if v.attrs.get("cf_role") == "timeseries_id"]
    check(ids == ["station_id"], f"{label}: timeseries_id variables {ids}")
    check(ds["station_id"].dims == ("station",), f"{label}: station_id not on the station dimension")
    for c in ("latitude", "longitude", "altitude"):
        check(ds[c].dims == ("station",), f"{label}: {c} is not a station variable")


def main(nc_path, parquet_path):
    version, table = standard_name_table()
    print(f"CF standard-name table version {version} ({len(table)} names)")
    pq = pd.read_parquet(parquet_path)
    ds = xr.open_dataset(nc_path)
    n = len(pq)
    check(ds.sizes["obs"] == n, f"obs dimension {ds.sizes['obs']} != {n} parquet rows")
    check_globals(ds, "results")
    check_cf_attributes(ds, table, "results")
    check(
        ds["station_index"].attrs.get("instance_dimension") == "station",
        "station_index has no instance_dimension = station",
    )

    # CF time decoding.
    check(np.issubdtype(ds["time"].dtype, np.datetime64), f"time decoded as {ds['time'].dtype}")
    want_t = pq["time_utc"].to_numpy().astype("datetime64[ms]")
    got_t = ds["time"].values.astype("datetime64[ms]")
    check((want_t == got_t).all(), "decoded times differ from the parquet time_utc")

    # Values.
    idx = ds["station_index"].values
    compared = 0
    station_vars = {"latitude_deg": "latitude", "longitude_deg": "longitude", "altitude_m": "altitude"}
    for col in pq.columns:
        s = pq[col]
        name = station_vars.get(col, col)
        if col in station_vars:
            got = ds[name].values[idx]
        elif s.dtype.kind == "f":
            got = ds[name].values
        else:
            continue
        want = s.to_numpy(dtype=float, na_value=np.nan)
        same = (got == want) | (np.isnan(got) & np.isnan(want))
        check(same.all(), f"{col}: {int((~same).sum())} values differ from the parquet output")
        check("units" in ds[name].attrs, f"{name}: no units")
        compared += 1
    check(compared >= 40, f"only {compared} numeric columns compared")
    sites = ds["station_id"].values[idx].astype(str)
    check((sites == pq["site"].to_numpy().astype(str)).all(), "site names differ")
    rows = ds["row"].values
    check((rows == pq["row"].to_numpy()).all(), "row numbers differ")

    # Flags.
    masks = ds["flags"].attrs["flag_masks"]
    meanings = ds["flags"].attrs["flag_meanings"].split()
    check(len(masks) == len(meanings), "flag_masks and flag_meanings differ in length")
    bits = ds["flags"].values
    decoded = [", ".join(m for k, m in zip(masks, meanings) if b & k) for b in bits]
    want_flags = pq["flags"].fillna("").tolist()
    check(decoded == want_flags, "decoded flags differ from the parquet flags")
    print(f"results: {n} rows, {compared} numeric columns equal, {ds.sizes['station']} stations")

    # The site x month summaries.
    summary_path = Path(nc_path).with_suffix(".summary.nc")
    sm = xr.open_dataset(summary_path)
    check_globals(sm, "summary")
    check_cf_attributes(sm, table, "summary")
    check(np.issubdtype(sm["time"].dtype, np.datetime64), "summary time not decoded")
    check(sm["time"].attrs.get("bounds") == "time_bnds", "summary time has no bounds")
    frame = pq.assign(
        station=ds["station_id"].values[idx].astype(str),
        month=pq["time_utc"].dt.to_period("M").dt.to_timestamp(),
    )
    sm_ids = sm["station_id"].values.astype(str)
    sm_t = sm["time"].values.astype("datetime64[ns]")
    checked = 0
    for q in ("dre_toa_24h", "dre_sfc_24h", "aod_550"):
        g = frame.groupby(["station", "month"])[q]
        for (station, month), values in g:
            s = list(sm_ids).index(station)
            t = list(sm_t).index(month.to_datetime64().astype("datetime64[ns]"))
            v = values.dropna()
            check(int(sm[f"{q}_count"].values[s, t]) == len(v), f"{q} count {station} {month}")
            mean = float(sm[f"{q}_mean"].values[s, t])
            check(abs(mean - v.mean()) <= 1e-12 * max(1.0, abs(v.mean())), f"{q} mean {station} {month}")
            check(float(sm[f"{q}_min"].values[s, t]) == v.min(), f"{q} min {station} {month}")
            check(float(sm[f"{q}_max"].values[s, t]) == v.max(), f"{q} max {station} {month}")
            checked += 1
    check(checked > 0, "no summary cell checked")
    print(f"summary: {checked} site-month cells checked against pandas")

    if FAILURES:
        for f in FAILURES:
            print("error:", f, file=sys.stderr)
        sys.exit(1)
    print("NetCDF side output: every check passed")


if __name__ == "__main__":
    if len(sys.argv) != 3:
        sys.exit(__doc__)
    main(sys.argv[1], sys.argv[2])
