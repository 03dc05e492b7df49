#!/usr/bin/env python3
"""Open hazebook report workbooks with openpyxl and check their structure.

Usage: open_report.py REPORT.xlsx [REPORT.xlsx ...]

For every workbook: every sheet opens and holds cells; table sheets (header row, units row,
frozen panes below them) have a text header in every column, a units row, an autofilter
and a number format on every number cell; Results sheets
start with the row identity and carry DRE columns; Rejected sheets have the seven columns of
a rejection; the About sheet states the cautions and the row reconciliation; no cell holds
the text of a NaN or an infinity; every chart refers to sheets of the workbook. Exits 1 with one line per problem, 0 when all is well.

CI (.ci/run) runs it on every report the tests keep: with HAZEBOOK_TEST_REPORTS set to
target/test-reports, tests/report_workbook.rs, tests/cli.rs and tests/merge.rs copy the
reports they write there (tests/outside_readers/mod.rs); and on the reports of the sample
inputs.
"""
import re
import sys
import zipfile

import openpyxl

REJECTED = ["File", "Sheet", "Row", "Cell", "Column", "Value", "Reason"]
ABOUT_TITLE = "Aerosol direct radiative effect report"
ABOUT_NEEDLES = [
    "read = computed + rejected + outside period",
    "Clear sky only",
    "Plane-parallel",
    "not a substitute for an assessment",
    "SHA-256",
]
BAD_TEXT = {"nan", "-nan", "inf", "-inf", "infinity", "-infinity"}


def check(path):
    problems = []
    wb = openpyxl.load_workbook(path)
    if not wb.sheetnames:
        return [f"{path}: no sheets"]
    about_seen = False
    for ws in wb.worksheets:
        where = f"{path}, sheet {ws.title!r}"
        if ws.max_row < 1 or ws.cell(1, 1).value is None:
            problems.append(f"{where}: cell A1 is empty")
            continue
        for row in ws.iter_rows(values_only=True):
            for v in row:
                if isinstance(v, str) and v.strip().lower() in BAD_TEXT:
                    problems.append(f"{where}: a cell holds {v!r}")
                if isinstance(v, float) and (v != v or v in (float("inf"), float("-inf"))):
                    problems.append(f"{where}: a cell holds a non-finite number")
        table = ws.freeze_panes is not None and ws.freeze_panes.endswith("3") and ws.freeze_panes[-2].isalpha()
        if table:
            headers = [ws.cell(1, c).value for c in range(1, ws.max_column + 1)]
            for c, h in enumerate(headers, start=1):
                if not isinstance(h, str) or not h.strip():
                    problems.append(f"{where}: header cell {openpyxl.utils.get_column_letter(c)}1 is empty")
            units = [ws.cell(2, c).value for c in range(1, ws.max_column + 1)]
            if not any(isinstance(u, str) and u for u in units):
                problems.append(f"{where}: row 2 holds no units")
            if ws.auto_filter.ref is None:
                problems.append(f"{where}: no autofilter")
            unformatted = 0
            for row in ws.iter_rows(min_row=3, max_row=min(ws.max_row, 2000)):
                for cell in row:
                    if isinstance(cell.value, (int, float)) and cell.number_format == "General":
                        unformatted += 1
            if unformatted:
                problems.append(f"{where}: {unformatted} number cell(s) without a number format")
            if ws.title.startswith("Results"):
                if headers[:1] != ["Site"]:
                    problems.append(f"{where}: first header is {headers[:1]}, expected ['Site']")
                if not any(isinstance(h, str) and h.startswith("ΔF_") for h in headers):
                    problems.append(f"{where}: no ΔF column")
            if ws.title.startswith("Rejected") and headers != REJECTED:
                problems.append(f"{where}: headers {headers}, expected {REJECTED}")
        if ws.cell(1, 1).value == ABOUT_TITLE:
            about_seen = True
            text = "\n".join(
                str(v) for row in ws.iter_rows(values_only=True) for v in row if v is not None
            )
            for needle in ABOUT_NEEDLES:
                if needle not in text:
                    problems.append(f"{where}: the About sheet does not state {needle!r}")
    if not about_seen:
        problems.append(f"{path}: no About sheet (A1 {ABOUT_TITLE!r})")
    # Charts: every series refers to a sheet of the workbook.
    with zipfile.ZipFile(path) as z:
        for part in sorted(n for n in z.namelist() if re.fullmatch(r"xl/charts/chart\d+\.xml", n)):
            xml = z.read(part).decode("utf-8")
            refs = re.findall(r"<c:f>'?(.*?)'?!", xml)
            if not refs:
                problems.append(f"{path}, {part}: a chart with no data references")
            for sheet in refs:
                if sheet.replace("''", "'") not in wb.sheetnames:
                    problems.append(f"{path}, {part}: refers to a missing sheet {sheet!r}")
    return problems


def main(argv):
    if len(argv) < 2:
        print(__doc__.strip().splitlines()[2], file=sys.stderr)
        return 2
    problems = []
    for p in argv[1:]:
        try:
            problems += check(p)
        except Exception as e:  # an unreadable workbook is a failure, with its reason
            problems.append(f"{p}: cannot open: {e}")
    for p in problems:
        print(p)
    if not problems:
        print(f"{len(argv) - 1} report(s) open cleanly")
    return 1 if problems else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
