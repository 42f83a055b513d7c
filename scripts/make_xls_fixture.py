"""Make the legacy ``.xls`` test fixture with LibreOffice, the reference writer of that format.

No writer for the old binary Excel format (BIFF8) that is still maintained installs from PyPI,
so the fixture is made once by LibreOffice Calc and committed:

1. an invented four-week log (sheets ``daily`` and ``skinfolds``) is written as ``.xlsx`` by
   openpyxl, with real date cells, one blank intake cell and one day without a row;
2. ``soffice --headless --convert-to xls`` turns it into ``tests/fixtures/xls/c001.xls``
   (Debian package libreoffice-calc-nogui; the file carries LibreOffice's own metadata, so it
   is not byte-reproducible: rerun only when the fixture must change);
3. the same values go, as plain text, to ``c001_daily.csv`` and ``c001_skinfolds.csv``
   beside it: what the test expects the reader to find in the ``.xls``.

Run: ``python scripts/make_xls_fixture.py`` (needs ``soffice`` on PATH).
"""

from __future__ import annotations

import csv
import datetime as dt
import shutil
import subprocess
import tempfile
from pathlib import Path

import openpyxl

OUT = Path(__file__).resolve().parent.parent / "tests" / "fixtures" / "xls"
START = dt.date(2026, 11, 3)


def daily_rows() -> list[list[object]]:
    rows: list[list[object]] = [["date", "weight_kg", "intake_kcal", "steps"]]
    for i in range(28):
        if i == 9:  # a day without a row
            continue
        day = START + dt.timedelta(days=i)
        weight = round(81.4 - 0.06 * i + (0.3, -0.2, 0.1, -0.3, 0.2, 0.0, -0.1)[i % 7], 1)
        intake = None if i == 15 else 1850 + 10 * (i % 5)  # one day without intake
        rows.append([day, weight, intake, 7000 + 150 * (i % 6)])
    return rows


def skinfold_rows() -> list[list[object]]:
    return [
        ["date", "triceps", "suprailiac", "thigh"],
        [START, 21.5, 17.0, 28.0],
        [START + dt.timedelta(days=21), 20.5, 16.0, 27.0],
    ]


def write_csv(path: Path, rows: list[list[object]]) -> None:
    with path.open("w", encoding="utf-8", newline="") as f:
        w = csv.writer(f, lineterminator="\n")
        for r in rows:
            w.writerow(
                ["" if v is None else v.isoformat() if isinstance(v, dt.date) else v for v in r]
            )


def main() -> None:
    soffice = shutil.which("soffice")
    if soffice is None:
        raise SystemExit("soffice not found (Debian: apt-get install libreoffice-calc-nogui)")
    OUT.mkdir(parents=True, exist_ok=True)
    with tempfile.TemporaryDirectory() as tmp:
        src = Path(tmp) / "c001.xlsx"
        wb = openpyxl.Workbook()
        daily = wb.active
        assert daily is not None
        daily.title = "daily"
        for r in daily_rows():
            daily.append(r)
        folds = wb.create_sheet("skinfolds")
        for r in skinfold_rows():
            folds.append(r)
        for ws in (daily, folds):
            for cell in ws["A"][1:]:
                cell.number_format = "yyyy-mm-dd"
        wb.save(src)
        subprocess.run(
            [soffice, "--headless", "--convert-to", "xls", "--outdir", tmp, str(src)],
            check=True,
            capture_output=True,
            env={"HOME": tmp, "PATH": "/usr/bin:/bin"},  # a throwaway LibreOffice profile
        )
        shutil.copyfile(Path(tmp) / "c001.xls", OUT / "c001.xls")
    write_csv(OUT / "c001_daily.csv", daily_rows())
    write_csv(OUT / "c001_skinfolds.csv", skinfold_rows())
    print(f"wrote {OUT / 'c001.xls'} and the expected values beside it")


if __name__ == "__main__":
    main()
