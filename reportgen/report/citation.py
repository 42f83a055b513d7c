"""Short citations for the dense practitioner summary.

The methods table holds full references in the Vancouver style the analysis writes
(``Authors. Title. Journal Year;Volume:Pages. doi:...``). A one-page summary has no room for
titles, so :func:`short_citation` keeps what finds the paper (first authors, journal, year,
volume, pages, DOI) and leaves the title out; ``methods.pdf`` keeps the full text. Anything
that is not a journal reference in that form (a book, a report, free text) is returned as it
is, so nothing is ever lost or garbled.
"""

from __future__ import annotations

import re

# "Jackson AS, Pollock ML, Ward A. Generalized equations ... women. Med Sci Sports Exerc 1980;"
#  authors: no full stop and no digit inside; "et al" may end the list
#  title: no full stop (it ends at one, or at a question mark), and never a "Year;"
#         (which would mean it swallowed another source)
#  source: capitalised journal words, then "Year;"
_JOURNAL_REFERENCE = re.compile(
    r"(?P<authors>[A-Z][^.\d]*?)\. "
    r"(?P<title>(?:(?!(?:1[89]|20)\d\d;)[^.?])+)[.?] "
    r"(?P<source>(?:[A-Z][A-Za-z]* )+(?:1[89]|20)\d\d;)"
)


def _short_authors(authors: str) -> str:
    names = [n.strip() for n in authors.split(",") if n.strip()]
    if names and names[-1] == "et al":
        names = names[:-1]
        return ", ".join([*names[:1], "et al"]) if len(names) > 1 else f"{names[0]}, et al"
    if len(names) <= 2:
        return ", ".join(names)
    return f"{names[0]}, et al"


def short_citation(reference: str) -> str:
    """``reference`` with the titles of its journal references left out, authors shortened
    to the first one plus "et al" when there are more than two."""

    def shorten(m: re.Match[str]) -> str:
        return f"{_short_authors(m['authors'])}. {m['source']}"

    return _JOURNAL_REFERENCE.sub(shorten, reference)
