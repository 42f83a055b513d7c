"""Golden files of rendered PDFs: per page, the text lines with coarse positions.

Each page is read back with pdfplumber; words are joined into lines (same baseline within
2 pt, left to right) and each line is stored as ``[x, y, text]`` with x and y (from the top
of the page) rounded to whole points.  A comparison passes when both documents have the
same pages and, page by page, the same lines in the same order with positions within
``TOLERANCE_PT``; otherwise the failure shows a unified diff of the pages that differ.

Update after an intended change with ``pytest --update-goldens`` (or the environment
variable ``REPORTGEN_UPDATE_GOLDEN=1``) and review ``git diff tests/golden`` before committing.
"""

from __future__ import annotations

import difflib
import io
import json
import os
from pathlib import Path

GOLDEN_DIR = Path(__file__).parent / "golden"
TOLERANCE_PT = 4.0  # a line may move this far (x or y) before it counts as moved
LINE_PT = 2.0  # words whose tops differ by less than this are on one line

Line = list[object]  # [x_pt, y_pt, text]


def page_lines(data: bytes) -> list[list[Line]]:
    """Per page, the text lines as [x, y, text], top to bottom."""
    import pdfplumber

    pages: list[list[Line]] = []
    with pdfplumber.open(io.BytesIO(data)) as pdf:
        for page in pdf.pages:
            words = sorted(
                page.extract_words(keep_blank_chars=False, use_text_flow=False),
                key=lambda w: (round(float(w["top"])), float(w["x0"])),
            )
            lines: list[list[dict[str, object]]] = []
            for w in words:
                if lines and abs(float(lines[-1][0]["top"]) - float(w["top"])) < LINE_PT:
                    lines[-1].append(w)
                else:
                    lines.append([w])
            out: list[Line] = []
            for ln in lines:
                ln.sort(key=lambda w: float(w["x0"]))  # type: ignore[arg-type]
                text = " ".join(str(w["text"]) for w in ln)
                out.append([round(float(ln[0]["x0"])), round(float(ln[0]["top"])), text])
            pages.append(out)
    return pages


def _render(pages: list[list[Line]]) -> list[str]:
    out = []
    for n, page in enumerate(pages, 1):
        out.append(f"--- page {n}")
        out += [f"{x:>4} {y:>4}  {text}" for x, y, text in page]
    return out


def differences(got: list[list[Line]], want: list[list[Line]]) -> list[str]:
    """Human-readable differences; empty when the documents match within the tolerance."""
    problems: list[str] = []
    if len(got) != len(want):
        problems.append(f"{len(got)} pages, golden file has {len(want)}")
    for n, (g, w) in enumerate(zip(got, want, strict=False), 1):
        same_text = [t for _, _, t in g] == [t for _, _, t in w]
        moved = same_text and any(
            abs(float(a[0]) - float(b[0])) > TOLERANCE_PT  # type: ignore[arg-type]
            or abs(float(a[1]) - float(b[1])) > TOLERANCE_PT  # type: ignore[arg-type]
            for a, b in zip(g, w, strict=True)
        )
        if not same_text or moved:
            problems.append(f"page {n}: " + ("lines moved" if moved else "text differs"))
    if not problems:
        return []
    diff = difflib.unified_diff(
        _render(want), _render(got), "golden", "rendered now", lineterm="", n=1
    )
    return problems + list(diff)


def check_golden(name: str, data: bytes, update: bool) -> None:
    """Compare ``data`` with ``tests/golden/<name>.json`` (rewrite it when ``update``)."""
    path = GOLDEN_DIR / f"{name}.json"
    got = page_lines(data)
    if update or os.environ.get("REPORTGEN_UPDATE_GOLDEN"):
        GOLDEN_DIR.mkdir(exist_ok=True)
        # one text line per file line, so that a review diff reads like the page
        rows = [
            "[\n" + ",\n".join(json.dumps(ln, ensure_ascii=False) for ln in page) + "\n]"
            for page in got
        ]
        path.write_text('{"pages": [\n' + ",\n".join(rows) + "\n]}\n", encoding="utf-8")
    want = json.loads(path.read_text(encoding="utf-8"))["pages"]
    diff = differences(got, want)
    assert not diff, (
        f"{name}: rendered PDF differs from {path.name} (update with "
        "`pytest --update-goldens` if intended, then review the diff):\n" + "\n".join(diff[:80])
    )
