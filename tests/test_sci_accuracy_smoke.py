"""Quick version of bench/bench_accuracy.py: a few simulated clients (invented data).

The full benchmark (hundreds of clients) checks the targets; this smoke run only
checks that the estimators beat the spreadsheet method and that their intervals
are roughly calibrated, with loose bounds that a handful of clients can support.
"""

from __future__ import annotations

import importlib.util
import math
import sys
from pathlib import Path
from types import ModuleType

import pytest

BENCH = Path(__file__).resolve().parent.parent / "bench" / "bench_accuracy.py"


@pytest.fixture(scope="module")
def bench() -> ModuleType:
    spec = importlib.util.spec_from_file_location("bench_accuracy", BENCH)
    assert spec is not None and spec.loader is not None
    mod = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = mod  # dataclasses look their module up there
    spec.loader.exec_module(mod)
    return mod


def test_smoke_benchmark(bench: ModuleType) -> None:
    s = bench.run(n_clients=16, seed=3, min_weeks=4)
    assert len(s.deficit_err) >= 20
    rms = bench.rms
    # trend much closer to the true body mass than the raw weigh-ins
    assert math.sqrt(sum(s.trend_sq) / len(s.trend_sq)) < 0.7 * math.sqrt(
        sum(s.raw_sq) / len(s.raw_sq)
    )
    # realised deficit and expenditure beat the spreadsheet method and sit near the bound
    assert rms(s.deficit_err) < 0.75 * rms(s.deficit_sheet_err)
    assert rms(s.deficit_err) < 1.5 * rms(s.ls_bound)
    # 80 % intervals: loosely calibrated on a small sample
    assert 0.6 <= sum(s.deficit_cover) / len(s.deficit_cover) <= 0.97
    table = bench.table(s)
    assert "realised deficit RMSE" in table and "ms per client-year" in table


def test_benchmark_main_prints_the_table(
    bench: ModuleType, capsys: pytest.CaptureFixture[str]
) -> None:
    assert bench.main(["--clients", "3", "--seed", "5"]) == 0
    out = capsys.readouterr().out
    assert out.startswith("3 simulated clients, seed 5")
    assert "80 % interval coverage" in out
