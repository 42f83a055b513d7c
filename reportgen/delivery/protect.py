"""Password protection of report PDFs (AES-256, PDF revision 6) and the password rule.

A client's report password is either written in the roster (column
``[mail] password_column``, default ``pdf_password``) or derived from a practice
secret kept in a file outside the book:

    password = first 12 characters of base32(HMAC-SHA256(secret, "<client_id>:<YYYY-MM>")),
               in groups of four joined by "-", e.g. "K7QM-2XJD-PA4R"

A practitioner summary is always derived, over "<client_id>:<YYYY-MM>:practitioner"
(never the client's own password, which the practitioner must not learn).

The secret is the file's bytes with surrounding white space removed. Base32 uses
only A-Z and 2-7, so there is no 0/O or 1/I/l to confuse when the password is read
out over the phone. 12 characters carry 60 bits: far beyond guessing by hand,
short enough to type.  The README ("Sending reports by e-mail") explains this to the clinic.
"""

from __future__ import annotations

import base64
import hashlib
import hmac
import io
import os
import secrets
import stat
from pathlib import Path

from pypdf import PdfReader, PdfWriter

PASSWORD_CHARS = 12
PASSWORD_GROUP = 4
MIN_SECRET_BYTES = 16


class SecretError(ValueError):
    """The practice secret file is missing, too short or kept in the wrong place."""


def read_practice_secret(path: Path, book_dir: Path | None = None) -> bytes:
    """Read the practice secret, refusing a file inside the book or one too short to be safe."""
    p = path.expanduser().resolve()
    if book_dir is not None:
        book = book_dir.resolve()
        if p == book or book in p.parents:
            raise SecretError(
                f"{path}: the practice secret is inside the book folder {book_dir}; "
                "move it outside the book (books get copied and shared, the secret must not)"
            )
    try:
        raw = p.read_bytes()
    except OSError as exc:
        raise SecretError(f"{path}: cannot read the practice secret file ({exc.strerror})") from exc
    secret = raw.strip()
    if len(secret) < MIN_SECRET_BYTES:
        raise SecretError(
            f"{path}: the practice secret is shorter than {MIN_SECRET_BYTES} characters; "
            "make a longer one (the README's sending section shows how)"
        )
    return secret


def secret_file_is_private(path: Path) -> bool:
    """True when only the owner can read the file (POSIX permissions)."""
    if os.name != "posix":  # pragma: no cover - permissions mean something else there
        return True
    mode = path.stat().st_mode
    return not mode & (stat.S_IRWXG | stat.S_IRWXO)


def derive_pdf_password(secret: bytes, client_id: str, month: str, kind: str = "report") -> str:
    """The PDF password for one client and month under the documented rule (module docstring).

    The practitioner summary gets its own password (text ``<client_id>:<YYYY-MM>:practitioner``)
    so the referring practitioner never learns the client's.
    """
    text = f"{client_id}:{month}" if kind == "report" else f"{client_id}:{month}:{kind}"
    digest = hmac.new(secret, text.encode(), hashlib.sha256).digest()
    text = base64.b32encode(digest).decode("ascii")[:PASSWORD_CHARS]
    return "-".join(text[i : i + PASSWORD_GROUP] for i in range(0, PASSWORD_CHARS, PASSWORD_GROUP))


def encrypt_pdf(pdf: bytes, user_password: str) -> bytes:
    """The PDF encrypted with AES-256 (R6); opening needs ``user_password``.

    The owner password is random and thrown away: nobody needs to change the
    permissions of a sent report, and printing and copying stay allowed.
    The output differs on every call (random salts), so hash the source file.
    """
    if not user_password:
        raise ValueError("an empty PDF password would not protect anything")
    writer = PdfWriter(clone_from=PdfReader(io.BytesIO(pdf)))
    writer.encrypt(
        user_password=user_password,
        owner_password=secrets.token_urlsafe(24),
        algorithm="AES-256",
    )
    # R6 encryption belongs to PDF 1.7 extension level 8 / PDF 2.0; pypdf would keep
    # the source's lower header, which strict readers frown on.
    writer.pdf_header = "%PDF-1.7"  # the property reads and writes str (bytes also taken)
    out = io.BytesIO()
    writer.write(out)
    return out.getvalue()
