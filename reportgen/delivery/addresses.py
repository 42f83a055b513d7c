"""Strict checking of e-mail addresses taken from the roster.

An address that does not pass is listed for a person to fix; it is never
repaired or guessed (a typo in a health-data recipient is worse than no mail).
"""

from __future__ import annotations

import re
from email.errors import HeaderParseError
from email.headerregistry import Address

# RFC 5321 / 5322 dot-atom local part and a DNS host name with at least two labels.
# Quoted local parts and address literals are valid in the RFCs but never occur in a
# clinic roster by intent, so they are refused rather than risked.
_ATEXT = r"[A-Za-z0-9!#$%&'*+/=?^_`{|}~-]+"
_LABEL = r"[A-Za-z0-9](?:[A-Za-z0-9-]{0,61}[A-Za-z0-9])?"
_ADDR_SPEC = re.compile(
    rf"^(?P<local>{_ATEXT}(?:\.{_ATEXT})*)@(?P<domain>(?:{_LABEL}\.)+(?:[A-Za-z]{{2,63}}|(?i:xn--)[A-Za-z0-9-]{{1,59}}))$"
)
MAX_ADDRESS_LEN = 254  # RFC 5321 4.5.3.1.3 path limit minus the angle brackets
MAX_LOCAL_LEN = 64  # RFC 5321 4.5.3.1.1


def check_address(value: str | None) -> tuple[str | None, str | None]:
    """Validate one roster cell as a single e-mail address.

    Returns ``(address, None)`` when valid and ``(None, reason)`` otherwise; an
    empty cell gives ``(None, "no address")``.  Only surrounding white space is
    removed; nothing else about the value is changed.
    """
    if value is None or not value.strip():
        return None, "no address"
    text = value.strip()
    if any(ord(c) < 32 or 0x7F <= ord(c) <= 0x9F for c in text):
        return None, f"{text!r} holds a control character (line break, tab, escape...)"
    if any(sep in text for sep in (",", ";", " ")):
        return None, f"{text!r} is not a single address (one address per cell)"
    if not text.isascii():
        return None, f"{text!r} has non-ASCII characters; use the plain ASCII form of the address"
    if len(text) > MAX_ADDRESS_LEN:
        return None, f"{text[:40]!r}... is longer than {MAX_ADDRESS_LEN} characters"
    m = _ADDR_SPEC.match(text)
    if m is None:
        return None, f"{text!r} is not a valid e-mail address"
    if len(m.group("local")) > MAX_LOCAL_LEN:
        return None, f"{text!r}: the part before @ is longer than {MAX_LOCAL_LEN} characters"
    try:
        parsed = Address(addr_spec=text)
    except (HeaderParseError, ValueError, IndexError) as exc:
        return None, f"{text!r} is not a valid e-mail address ({exc})"
    if parsed.addr_spec != text:
        return None, f"{text!r} is not a valid e-mail address"
    return text, None


def address_domain(address: str) -> str:
    """The domain part of a checked address (used for Message-ID)."""
    return address.rsplit("@", 1)[1].lower()
