"""Guards against hostile or broken input files, in one place.

Every book file is read through :func:`read_input`: the file must be a regular file (a folder,
FIFO or device is refused without ever blocking on it), no larger than a limit, and it is read
once into memory so that what is parsed and what is hashed for the manifest are the same bytes
(:func:`recording` collects those hashes).  Workbooks are inspected before the spreadsheet
reader sees them (:func:`check_workbook`): the zip's uncompressed size, the number of rows and
columns each sheet declares or uses, so an archive bomb or a sheet claiming a million-row used
range is refused with a message instead of exhausting memory or aborting the process.

The limits are far above any real client book (a year of daily entries is about 365 rows and
20 kB) and far below what would hurt a small machine; each carries its reason.
"""

from __future__ import annotations

import contextlib
import contextvars
import csv
import hashlib
import os
import re
import stat
import zipfile
from collections.abc import Iterator, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Final

from reportgen.io.model import Problem

#: [bytes] Largest CSV file read: a daily log of 54 years is well under 1 MB; 20 MB leaves
#: room for wide exports while keeping memory far under 1 GB (rows and cells are limited too).
MAX_CSV_BYTES: Final = 20 * 1024 * 1024
#: [bytes] Largest workbook file read (compressed size on disk).
MAX_WORKBOOK_BYTES: Final = 20 * 1024 * 1024
#: [bytes] Largest total uncompressed size of a workbook's parts: beyond this a small file can
#: expand to gigabytes (an archive bomb).  Real logs are a few hundred kB uncompressed.
MAX_WORKBOOK_UNCOMPRESSED: Final = 100 * 1024 * 1024
#: Most data rows in one file or sheet: 20000 days is 54 years of daily entries, and a roster
#: of 20000 clients is a very large practice.  Reading and checking that many rows takes a few
#: seconds; an export repeated to millions of rows is refused at once instead.
MAX_ROWS: Final = 20_000
#: Most columns in one file or sheet: the widest input has about 20 named columns.
MAX_COLUMNS: Final = 200
#: Most cells (rows x columns) one sheet may span: keeps the spreadsheet reader's memory
#: bounded (each cell becomes a Python object of about 50-100 bytes).
MAX_CELLS: Final = 1_000_000
#: [characters] Longest single cell: a name or a note is far shorter; a longer cell is damage
#: (or an attempt to exhaust memory), reported for its row only.
MAX_CELL_CHARS: Final = 10_000
#: [bytes] Largest logo file read (a practice logo is a few kB to a few hundred kB).
MAX_LOGO_BYTES: Final = 10 * 1024 * 1024

# CSV fields up to the whole file's size are parsed (the row is then judged by MAX_CELL_CHARS),
# so one long cell never makes the csv module refuse the whole file.
csv.field_size_limit(MAX_CSV_BYTES)


class InputRefused(Exception):
    """A file that is not read at all; the message names the file and says why."""

    def __init__(self, message: str, code: str = "unreadable-file") -> None:
        super().__init__(message)
        self.message = message
        self.code = code


_DIGESTS: contextvars.ContextVar[dict[str, str] | None] = contextvars.ContextVar(
    "reportgen_input_digests", default=None
)


@contextlib.contextmanager
def recording() -> Iterator[dict[str, str]]:
    """Collect ``{path as read: sha256}`` of every file :func:`read_input` reads inside."""
    digests: dict[str, str] = {}
    token = _DIGESTS.set(digests)
    try:
        yield digests
    finally:
        _DIGESTS.reset(token)


def _kind(mode: int) -> str:
    if stat.S_ISDIR(mode):
        return "a folder"
    if stat.S_ISFIFO(mode):
        return "a named pipe (FIFO)"
    if stat.S_ISCHR(mode) or stat.S_ISBLK(mode):
        return "a device"
    if stat.S_ISSOCK(mode):
        return "a socket"
    return "not a regular file"


def special_file(path: Path) -> str | None:
    """What ``path`` is when it exists but is not a regular file ("a folder"...), else None.

    Only ``stat`` is used: a FIFO is never opened.
    """
    try:
        st = path.stat()
    except OSError:
        return None
    return None if stat.S_ISREG(st.st_mode) else _kind(st.st_mode)


def file_state(path: Path) -> str:
    """``"absent"``, ``"regular"``, or what else is there ("a folder", "a broken link"...).

    Only ``stat`` is used: a FIFO is never opened.
    """
    if not os.path.lexists(path):
        return "absent"
    try:
        st = path.stat()
    except OSError as exc:
        return "a broken link" if path.is_symlink() else f"unreadable ({exc.strerror})"
    return "regular" if stat.S_ISREG(st.st_mode) else _kind(st.st_mode)


def read_input(path: Path, rel: str, max_bytes: int, what: str = "file") -> bytes:
    """The bytes of a regular file of at most ``max_bytes``, read once.

    Raises :class:`InputRefused` naming ``rel`` for a folder, FIFO, device, unreadable or
    too large file.  Opening uses ``O_NONBLOCK`` and the type is checked on the open
    descriptor, so a FIFO never blocks and a file swapped in between is still caught.
    """
    flags = os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_NOCTTY", 0)
    try:
        fd = os.open(path, flags)
    except OSError as exc:
        reason = exc.strerror or type(exc).__name__
        raise InputRefused(f"{rel} cannot be read ({reason})") from None
    try:
        st = os.fstat(fd)
        if not stat.S_ISREG(st.st_mode):
            raise InputRefused(
                f"{rel} is {_kind(st.st_mode)}, not a {what}; put a regular file there"
            )
        if st.st_size > max_bytes:
            raise InputRefused(
                f"{rel} is {st.st_size / 1e6:.1f} MB, more than the {max_bytes / 1e6:.0f} MB "
                f"reportgen reads from one {what}; is it the right file?",
                "file-too-large",
            )
        chunks: list[bytes] = []
        total = 0
        while True:
            try:
                block = os.read(fd, 1 << 20)
            except BlockingIOError:  # pragma: no cover - only special files, refused above
                raise InputRefused(f"{rel} cannot be read (would block)") from None
            if not block:
                break
            total += len(block)
            if total > max_bytes:  # grew while being read
                raise InputRefused(
                    f"{rel} grew beyond {max_bytes / 1e6:.0f} MB while being read",
                    "file-too-large",
                )
            chunks.append(block)
    except OSError as exc:
        reason = exc.strerror or type(exc).__name__
        raise InputRefused(f"{rel} cannot be read ({reason})") from None
    finally:
        os.close(fd)
    data = b"".join(chunks)
    digests = _DIGESTS.get()
    if digests is not None:
        digests[rel] = hashlib.sha256(data).hexdigest()
    return data


def check_text_rows(data: bytes, rel: str) -> None:
    """Refuse a CSV beyond :data:`MAX_ROWS` lines or :data:`MAX_CELLS` cells.

    Counted on the bytes before parsing (line breaks, and separators plus line breaks for
    cells; quoted commas count too, so this is an upper bound), so the refusal is fast and
    the parse that follows has bounded memory.
    """
    lines = data.count(b"\n")
    if lines > MAX_ROWS + 1:
        raise InputRefused(
            f"{rel} has {lines} lines, more than the {MAX_ROWS} rows reportgen reads from one "
            "file; is it the right file (an export repeated many times)?",
            "file-too-large",
        )
    cells = data.count(b",") + data.count(b";") + data.count(b"\t") + lines + 1
    if cells > MAX_CELLS:
        raise InputRefused(
            f"{rel} has about {cells} cells, more than the {MAX_CELLS} reportgen reads from one "
            "file; is it the right file?",
            "file-too-large",
        )


_CELL_REF: Final = re.compile(rb'<(?:\w+:)?c\b[^>]*?\br="([A-Z]{1,3})([0-9]{1,7})"')
_ROW_REF: Final = re.compile(rb'<(?:\w+:)?row\b[^>]*?\br="([0-9]{1,7})"')
_DIMENSION: Final = re.compile(rb'<(?:\w+:)?dimension\b[^>]*?\bref="([A-Z0-9:$]+)"')
_REF: Final = re.compile(r"\$?([A-Z]{1,3})\$?([0-9]{1,7})")
_ODS_REPEAT: Final = re.compile(rb'number-(?:rows|columns)-repeated="([0-9]+)"')


def _col_number(letters: str) -> int:
    n = 0
    for ch in letters:
        n = n * 26 + (ord(ch) - 64)
    return n


@dataclass(frozen=True)
class _Extent:
    rows: int = 0
    cols: int = 0

    def grow(self, rows: int, cols: int) -> _Extent:
        return _Extent(max(self.rows, rows), max(self.cols, cols))


def _refuse_extent(rel: str, part: str, extent: _Extent) -> None:
    if (
        extent.rows > MAX_ROWS + 1
        or extent.cols > MAX_COLUMNS
        or (extent.rows * extent.cols > MAX_CELLS)
    ):
        raise InputRefused(
            f"{rel} ({part}) spans {extent.rows} rows and {extent.cols} columns, more than "
            f"reportgen reads from one sheet (at most {MAX_ROWS} rows, {MAX_COLUMNS} columns and "
            f"{MAX_CELLS} cells); delete the unused rows and columns (or the stray far-away "
            "cell) and save it again",
            "file-too-large",
        )


def check_workbook(data: bytes, rel: str) -> None:
    """Inspect a workbook (``.xlsx``/``.ods``, a zip) before any spreadsheet reader sees it.

    Refuses archive bombs (total uncompressed size above :data:`MAX_WORKBOOK_UNCOMPRESSED`),
    and sheets whose declared or used range exceeds the row, column or cell limits.  The
    sheet XML is streamed in blocks and scanned for cell references, so the check itself
    needs little memory.  Files that are not zips are left to the reader (which reports
    them as unreadable).
    """
    import io

    try:
        zf = zipfile.ZipFile(io.BytesIO(data))
    except (zipfile.BadZipFile, OSError, ValueError):
        return
    with zf:
        infos = zf.infolist()
        total = sum(i.file_size for i in infos)
        if total > MAX_WORKBOOK_UNCOMPRESSED or len(infos) > 10_000:
            raise InputRefused(
                f"{rel} expands to {total / 1e6:.0f} MB when unpacked, more than the "
                f"{MAX_WORKBOOK_UNCOMPRESSED / 1e6:.0f} MB reportgen reads from one workbook; "
                "is it the right file?",
                "file-too-large",
            )
        for info in infos:
            name = info.filename
            if re.fullmatch(r"xl/worksheets/[^/]+\.xml", name):
                _scan_xlsx_sheet(zf, info, rel)
            elif name == "content.xml":
                _scan_ods(zf, info, rel)


def _read_blocks(zf: zipfile.ZipFile, info: zipfile.ZipInfo, rel: str) -> Iterator[bytes]:
    """Decompressed blocks with a small overlap, never more than the declared size."""
    budget = MAX_WORKBOOK_UNCOMPRESSED
    tail = b""
    try:
        with zf.open(info) as fh:
            while True:
                block = fh.read(1 << 20)
                if not block:
                    break
                budget -= len(block)
                if budget < 0:  # lies about its size in the directory
                    raise InputRefused(
                        f"{rel} expands beyond {MAX_WORKBOOK_UNCOMPRESSED / 1e6:.0f} MB when "
                        "unpacked; is it the right file?",
                        "file-too-large",
                    )
                yield tail + block
                tail = block[-256:]
    except (zipfile.BadZipFile, OSError, EOFError, RuntimeError, ValueError):
        return  # a damaged part: the reader reports the file as unreadable


def _scan_xlsx_sheet(zf: zipfile.ZipFile, info: zipfile.ZipInfo, rel: str) -> None:
    part = info.filename.rsplit("/", 1)[-1].removesuffix(".xml")
    extent = _Extent()
    first = True
    for block in _read_blocks(zf, info, rel):
        if first:
            first = False
            m = _DIMENSION.search(block)
            if m:
                refs = _REF.findall(m.group(1).decode("ascii"))
                if refs:
                    letters, digits = refs[-1]
                    extent = extent.grow(int(digits), _col_number(letters))
                    _refuse_extent(rel, part, extent)
        for m in _ROW_REF.finditer(block):
            extent = extent.grow(int(m.group(1)), 0)
        for m in _CELL_REF.finditer(block):
            extent = extent.grow(int(m.group(2)), _col_number(m.group(1).decode("ascii")))
        _refuse_extent(rel, part, extent)


def _scan_ods(zf: zipfile.ZipFile, info: zipfile.ZipInfo, rel: str) -> None:
    # An OpenDocument sheet repeats rows/columns by a count: a single element can claim a
    # million rows.  Repeats of empty trailing rows are common (a few thousand); the reader
    # expands them, so large counts are refused.
    for block in _read_blocks(zf, info, rel):
        for m in _ODS_REPEAT.finditer(block):
            if int(m.group(1)) > MAX_CELLS:
                raise InputRefused(
                    f"{rel} repeats one row or column {int(m.group(1))} times, more than "
                    f"reportgen reads ({MAX_CELLS} cells); delete the unused rows and columns",
                    "file-too-large",
                )


def header_problem(
    header: Sequence[object], file: str, where: str, row: int, client_id: str | None
) -> Problem | None:
    if len(header) > MAX_COLUMNS:
        return Problem(
            "error",
            "file-too-large",
            f"{where} has {len(header)} columns in its header row, more than the "
            f"{MAX_COLUMNS} reportgen reads; is it the right file?",
            file=file,
            row=row,
            client_id=client_id,
        )
    if long_cell(header) is not None:
        return Problem(
            "error",
            "cell-too-long",
            f"the header row of {where} has a cell longer than {MAX_CELL_CHARS} "
            "characters; is it the right file?",
            file=file,
            row=row,
            client_id=client_id,
        )
    return None


def long_cell_problem(
    r: Sequence[object],
    names: tuple[str, ...],
    raw: tuple[str, ...],
    file: str,
    where: str,
    row: int,
    client_id: str | None,
) -> Problem | None:
    """An error for a row holding a cell beyond :data:`MAX_CELL_CHARS` (the row is left out).

    For a table with a ``client_id`` column (roster, phases) the row's client is named.
    """
    pos = long_cell(r)
    if pos is None:
        return None
    cid = client_id
    if cid is None and "client_id" in names:  # a roster or phases row: name its client
        at = names.index("client_id")
        text = r[at] if at < len(r) else None
        if isinstance(text, str) and 0 < len(text.strip()) <= MAX_CELL_CHARS:
            cid = text.strip()
    column = raw[pos] if pos < len(raw) else None
    return Problem(
        "error",
        "cell-too-long",
        f"row {row} of {where} has a cell of {len(str(r[pos]))} characters"
        + (f" in column {column}" if column else "")
        + f", more than the {MAX_CELL_CHARS} reportgen reads; the row is left out. "
        "Shorten the cell",
        file=file,
        row=row,
        column=column,
        client_id=cid,
    )


def long_cell(row: Sequence[object]) -> int | None:
    """Position of the first text cell longer than :data:`MAX_CELL_CHARS`, else None."""
    for pos, cell in enumerate(row):
        if isinstance(cell, str) and len(cell) > MAX_CELL_CHARS:
            return pos
    return None


_CONTROL: Final = re.compile(r"[\x00-\x1f\x7f-\x9f\u2028\u2029\u202a-\u202e\u2066-\u2069]")


def escape_controls(text: object, *, keep_newlines: bool = False) -> str:
    """Text for a terminal: control characters (escape codes, CR, bidi overrides) shown as
    ``\\x1b``-style escapes, so data can never move the cursor, recolour or hide output.

    ``keep_newlines`` leaves line breaks of a multi-line message alone (each line escaped).
    """
    s = str(text)
    if keep_newlines:
        return "\n".join(escape_controls(line) for line in s.split("\n"))
    if not _CONTROL.search(s):
        return s
    return _CONTROL.sub(lambda m: m.group(0).encode("unicode_escape").decode("ascii"), s)


def has_control(text: str) -> bool:
    """True when ``text`` holds any control character (CR, LF, tab, escape...)."""
    return any(ord(c) < 32 or 0x7F <= ord(c) <= 0x9F for c in text)
