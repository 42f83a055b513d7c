"""The month's methods document: written by the batch beside the overview, listed in the
manifest, naming every equation used for the month's clients and the safety rules."""

from __future__ import annotations

import json
import re
from pathlib import Path

from _report_helpers import SAMPLE_BOOK, SAMPLE_MONTH, pdf_pages_text, sample_analysis
from click.testing import CliRunner

from reportgen.cli import main
from reportgen.config import Config, ReportSettings
from reportgen.manifest import sha256_bytes
from reportgen.report.methods_doc import methods_used, render_methods
from reportgen.science import flags as F


def flat(data: bytes) -> str:
    return " ".join(" ".join(pdf_pages_text(data)).split())


def test_methods_document_lists_each_method_once_with_its_clients() -> None:
    analyses = [sample_analysis(c) for c in ("c001", "c002", "c008")]
    used = methods_used([a.methods for a in analyses])
    codes = [m.code for m, _ in used]
    assert len(codes) == len(set(codes)) and "ema" not in codes
    for m, n in used:
        assert n == sum(any(x.code == m.code for x in a.methods) for a in analyses)
    text = flat(render_methods([a.methods for a in analyses], 3, SAMPLE_MONTH, Config()))
    assert "Methods · November 2026" in text and "3 client reports" in text
    for m, n in used:
        assert " ".join(m.name.split()) in text
        assert f"Used for {n} client" in text
    # thresholds come from the rules themselves (science.flags)
    assert f"loss over {F.RAPID_LOSS_PCT_PER_WEEK:.1f} % of body weight" in text
    assert f"BMI under {F.BMI_UNDERWEIGHT:.1f} kg/m²" in text
    for tag in ("from memory", "SEE SEE", "+ Siri", "(SEE "):
        assert tag not in text


def test_batch_writes_methods_pdf_beside_the_overview(tmp_path: Path) -> None:
    out = tmp_path / "out"
    args = ["batch", str(SAMPLE_BOOK), "--month", SAMPLE_MONTH, "--out", str(out)]
    result = CliRunner().invoke(
        main, [*args, "--clients", "c001,c008", "--quiet", "--workers", "1"]
    )
    assert result.exit_code == 0, result.output
    month = out / SAMPLE_MONTH
    data = (month / "methods.pdf").read_bytes()
    manifest = json.loads((month / "manifest.json").read_text(encoding="utf-8"))
    assert manifest["files"]["methods.pdf"] == sha256_bytes(data)
    assert "2 client reports" in flat(data)


def test_methods_document_carries_the_cautions_and_ends_each_reference() -> None:
    """The practice's methods sheet goes to referral partners on its own: it says what the
    reports are not, who needs medical supervision (thresholds from science.flags) and
    that local rules come first; each reference ends before "Used for"."""
    analyses = [sample_analysis(c) for c in ("c001", "c008")]
    text = flat(render_methods([a.methods for a in analyses], 2, SAMPLE_MONTH, Config()))
    for phrase in (
        "not medical advice or a diagnosis",
        "licensed health professional",
        "pregnant or breastfeeding",
        f"under {F.ADULT_AGE_YEARS},",
        "history of disordered eating",
        f"BMI under {F.BMI_UNDERWEIGHT:.1f}",
        f"below about {F.INTAKE_FLOOR_WOMEN_KCAL:,.0f} kcal/day for women",
        f"below {F.INTAKE_VLCD_KCAL:,.0f} kcal/day only under medical care",
        f"more than about {F.RAPID_LOSS_PCT_PER_WEEK:.0f} % of body weight a week",
        "Local regulations and the scope of licensed practice take precedence",
    ):
        assert phrase in text, phrase
    assert re.search(r"\d Used for", text) is None  # "...51.2.241 Used for" lacked its stop
    assert "doi:10.1093/ajcn/51.2.241. Used for" in text


def _sections(text: str, headings: list[str]) -> dict[str, str]:
    """The methods body cut at its section headings (in page order)."""
    at = [(text.index(h), h) for h in headings]
    at.sort()
    out = {}
    for (i, h), nxt in zip(at, [*at[1:], (len(text), "")], strict=True):
        out[h] = text[i : nxt[0]]
    return out


def test_each_methods_section_describes_the_method_the_analysis_records() -> None:
    """Each section of methods.pdf names what the analysis records as its method (the
    analysis' own methods table, ``reportgen.analysis.methods.METHODS``) and the
    constants the code uses, so the page cannot keep describing a method the code left."""
    from reportgen.analysis.methods import METHODS
    from reportgen.science import adaptation as A

    analyses = [sample_analysis(c) for c in ("c001", "c002", "c008")]
    text = flat(render_methods([a.methods for a in analyses], 3, SAMPLE_MONTH, Config()))
    heads = [
        "Trend weight and weekly rate",
        "Realised deficit and expenditure",
        "Expected expenditure Expected",
        "Expenditure below expected: adaptation, activity and logging",
        "Is progress stalling?",
        "Diet breaks",
        "Projection",
        "Safety flags",
    ]
    sec = _sections(text, heads)
    recorded = {m.code for a in analyses for m in a.methods}
    # (method code, section, words the analysis' own entry and the section must share)
    ties = [
        ("local-linear-trend", heads[0], ["AR(1)", "Kalman", "Durbin"]),
        ("hall-2008-energy-density", heads[1], ["Hall 2008", "Forbes"]),
        ("expenditure-state-space", heads[1], ["state-space model of weight with intake"]),
        ("hall-2011", heads[6], ["Hall et al."]),
        ("adaptation-combined", heads[3], ["Leibel", "Chow", "Sanghvi", "ACSM", "logging"]),
    ]
    for code, head, words in ties:
        assert code in recorded, code
        entry = METHODS[code].name + " " + METHODS[code].reference
        for w in words:
            assert w in entry, (code, w)
            assert w in sec[head], (head, w)
    adapt = sec[heads[3]]
    for phrase in (
        "Your data alone",
        "Typical for a deficit like this",
        "Combined",
        "baseline",  # the data's error includes the baseline's own noise
        "Student-t",  # heavy tails
        "change in logging",
        "Intake implied by weight",
        "smaller body",
        "not measured",
        A.NOT_DISTINGUISHABLE,
    ):
        assert phrase in adapt, phrase
    # the old description (a plain difference judged against a fixed share) is gone
    assert "Adaptation is expenditure minus expected" not in text
    # glycogen with its water: 17.6 MJ/kg glycogen (Hall 2008) with 2.7 g water per g
    # (Hall et al. 2011's model): 17600 / 4.184 / 3.7 = 1,137 kcal/kg (hand calculation)
    assert f"{17600 / 4.184 / 3.7:,.0f} kcal/kg" in sec[heads[1]]
    stall = sec[heads[4]]
    assert "last 4 weeks" in stall and "6 then 8 weeks" in stall and "pooled" in stall
    brk = sec[heads[5]]
    for phrase in ("12 weeks", "20 %", "2 weeks at maintenance", "MATADOR", "ICECAP"):
        assert phrase in brk, phrase


def test_methods_constants_follow_the_configured_energy_unit() -> None:
    text = flat(
        render_methods([], 0, SAMPLE_MONTH, Config(report=ReportSettings(energy_unit="kJ")))
    )
    # Hall 2008: fat 9,440 kcal/kg x 4.184 = 39,497 kJ/kg (hand calculation)
    assert "39,497 kJ/kg" in text
    assert "9,440 kcal/kg" not in text
