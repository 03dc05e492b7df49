"""Independent read of sample-inputs/brinefell-campaign.xlsx (sheet "observations") with
openpyxl 3.1.5, for tests/ingest_reference.rs.

Writes tests/fixtures/independent_read.csv: one line per data row with the spreadsheet row
number, site, time (ISO 8601, as the cell's date-time) and the numeric cells, formatted with
%.10g so the output is deterministic. Regenerate and diff:

    .venv/bin/python tests/reference/independent_read.py && git diff tests/fixtures/independent_read.csv
"""

import pathlib

import openpyxl

ROOT = pathlib.Path(__file__).resolve().parents[2]
SOURCE = ROOT / "sample-inputs" / "brinefell-campaign.xlsx"
OUT = ROOT / "tests" / "fixtures" / "independent_read.csv"


def main() -> None:
    wb = openpyxl.load_workbook(SOURCE, read_only=True, data_only=True)
    ws = wb["observations"]
    rows = ws.iter_rows(values_only=True)
    header = next(rows)
    assert header[0] == "site" and header[1] == "time_utc", header
    lines = ["row,site,time_utc,aod_500,angstrom,ssa_550,g_550,ozone_du,water_cm"]
    for i, values in enumerate(rows, start=2):
        if all(v is None for v in values):
            continue
        site, t, *numbers = values[:8]
        fields = [str(i), site, t.strftime("%Y-%m-%dT%H:%M:%S")]
        fields += ["" if v is None else "%.10g" % v for v in numbers]
        lines.append(",".join(fields))
    OUT.write_text("\n".join(lines) + "\n", encoding="utf-8")


if __name__ == "__main__":
    main()
