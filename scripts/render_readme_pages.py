"""Render two pages of a sample client report to PNG for the README.

Runs the real pipeline (io readers, ``analyse_client``, ``render_client_report``) on the
sample book and turns page 1 (overview) and page 2 (charts) into PNGs with poppler's
``pdftoppm``, so the pictures in the README always match the current code.

Run:  MPLBACKEND=Agg python scripts/render_readme_pages.py [--client c001] [--dpi 70]
Writes docs/images/report-overview.png and docs/images/report-charts.png.
"""

from __future__ import annotations

import argparse
import datetime as dt
import shutil
import subprocess
import sys
import tempfile
from pathlib import Path

REPO = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(REPO))

from reportgen.analysis import analyse_client  # noqa: E402
from reportgen.config import Config, PracticeSettings  # noqa: E402
from reportgen.io.book import read_client, read_roster  # noqa: E402
from reportgen.report import render_client_report  # noqa: E402

BOOK = REPO / "sample_inputs"
MONTH = "2026-11"
PAGES = {1: "report-overview.png", 2: "report-charts.png"}
# The sample book's invented practice (see sample_inputs/README.md).
CONFIG = Config(
    practice=PracticeSettings(
        name="Kestrel Row Nutrition",
        address="12 Kestrel Row, Lowmoor",
        phone="+44 1632 960000",
        email="hello@kestrel-row.example",
    )
)


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--client", default="c001", help="sample client id (default c001)")
    ap.add_argument("--dpi", type=int, default=70, help="PNG resolution (default 70)")
    ap.add_argument("--out", type=Path, default=REPO / "docs" / "images")
    args = ap.parse_args(argv)
    if shutil.which("pdftoppm") is None:
        print("pdftoppm (poppler-utils) is needed to make the PNGs", file=sys.stderr)
        return 2
    roster = read_roster(BOOK)
    client = next(c for c in roster.clients if c.client_id == args.client)
    record = read_client(
        BOOK,
        client,
        roster.phases.get(client.client_id, ()),
        dt.date(2026, 11, 30),
        today=dt.date(2026, 12, 1),
        roster_problems=tuple(p for p in roster.problems if p.client_id == client.client_id),
    )
    if not record.ok:
        print(f"{args.client}: the sample book has errors for this client", file=sys.stderr)
        return 1
    pdf = render_client_report(analyse_client(record, MONTH, CONFIG.analysis), CONFIG)
    args.out.mkdir(parents=True, exist_ok=True)
    with tempfile.TemporaryDirectory() as tmp:
        src = Path(tmp) / "report.pdf"
        src.write_bytes(pdf)
        for page, name in PAGES.items():
            stem = Path(tmp) / f"page{page}"
            subprocess.run(
                [
                    "pdftoppm",
                    "-r",
                    str(args.dpi),
                    "-png",
                    "-singlefile",
                    "-f",
                    str(page),
                    "-l",
                    str(page),
                    str(src),
                    str(stem),
                ],
                check=True,
            )
            shutil.copyfile(stem.with_suffix(".png"), args.out / name)
            print(args.out / name)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
