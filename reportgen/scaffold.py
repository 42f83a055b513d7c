"""Write openpyxl workbooks byte-for-byte reproducibly.

openpyxl stamps the save time into ``docProps/core.xml`` and every zip entry,
so two saves of the same workbook differ.  :func:`save_workbook` pins both to
one fixed instant, which keeps generated books (the sample book, fresh
scaffolds) identical from run to run and their hashes meaningful.
"""

from __future__ import annotations

import datetime as dt
import io
import re
import zipfile
from pathlib import Path

from openpyxl import Workbook

FIXED_TIME = dt.datetime(2026, 1, 1, 0, 0, 0)
_ZIP_TIME = (2026, 1, 1, 0, 0, 0)
_MODIFIED = re.compile(rb"(<dcterms:modified[^>]*>)[^<]*(</dcterms:modified>)")


def workbook_bytes(wb: Workbook, when: dt.datetime = FIXED_TIME) -> bytes:
    """The saved workbook with fixed document and zip timestamps."""
    wb.properties.created = when
    wb.properties.creator = "reportgen"
    wb.properties.lastModifiedBy = None
    raw = io.BytesIO()
    wb.save(raw)  # stamps "modified" with the current time; replaced below
    stamp = when.strftime("%Y-%m-%dT%H:%M:%SZ").encode()
    out = io.BytesIO()
    with (
        zipfile.ZipFile(io.BytesIO(raw.getvalue())) as src,
        zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as dst,
    ):
        for info in src.infolist():
            data = src.read(info.filename)
            if info.filename == "docProps/core.xml":
                data = _MODIFIED.sub(rb"\g<1>" + stamp + rb"\g<2>", data)
            entry = zipfile.ZipInfo(info.filename, date_time=_ZIP_TIME)
            entry.compress_type = zipfile.ZIP_DEFLATED
            entry.external_attr = 0o600 << 16
            dst.writestr(entry, data)
    return out.getvalue()


def save_workbook(wb: Workbook, path: Path, when: dt.datetime = FIXED_TIME) -> None:
    """Save ``wb`` to ``path`` reproducibly (see :func:`workbook_bytes`)."""
    path.write_bytes(workbook_bytes(wb, when))
