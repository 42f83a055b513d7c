"""A science error nobody planned for reaches the batch's per-client handling.

The analysis catches only the named condition ``science.errors.NotComputable``; any
other exception from a science function fails that client alone, and ``--verbose``
shows its traceback.
"""

from __future__ import annotations

import json
from pathlib import Path
from typing import Any

import pytest
from _batch_helpers import MONTH, copy_sample, run_cli

from reportgen.io.model import Sex
from reportgen.science.skinfolds import BodyFatEstimate


def test_unexpected_science_error_fails_only_that_client(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    import reportgen.analysis.composition as composition

    real = composition.estimate_body_fat

    def broken_for_women(sex: Sex, *args: Any) -> BodyFatEstimate:
        if sex == "female":
            raise ArithmeticError("skinfold sum overflowed")
        return real(sex, *args)

    monkeypatch.setattr(composition, "estimate_body_fat", broken_for_women)
    book = copy_sample(tmp_path / "book")
    # both have skinfold sessions; c002 is a man and unaffected, c003 a woman
    args = [book, "--month", MONTH, "--out", tmp_path / "out", "--clients", "c002,c003"]
    quiet = run_cli([*args, "--workers", "1"])
    assert quiet.exit_code == 1
    manifest = json.loads((tmp_path / "out" / MONTH / "manifest.json").read_text())
    assert manifest["clients"]["c002"]["status"] == "ok"
    assert manifest["clients"]["c003"]["status"] == "error"
    assert manifest["clients"]["c003"]["messages"] == [
        "unexpected error: ArithmeticError: skinfold sum overflowed"
    ]
    assert "Traceback" not in quiet.output
    verbose = run_cli([*args, "--workers", "1", "--verbose"])
    assert verbose.exit_code == 1
    assert "Traceback (most recent call last)" in verbose.stderr
    assert "composition.py" in verbose.stderr
    assert "ArithmeticError: skinfold sum overflowed" in verbose.stderr
