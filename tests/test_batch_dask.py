"""--scheduler: the same task function on a Dask distributed cluster on 127.0.0.1."""

from __future__ import annotations

import json
import socket
from pathlib import Path

import pytest
from _batch_helpers import MONTH, ReferenceRun, reference_run, run_cli

import reportgen.batch

__all__ = ["reference_run"]

distributed = pytest.importorskip("distributed")


@pytest.mark.parametrize("processes", [False, True], ids=["threads", "processes"])
def test_local_cluster_gives_the_same_files(
    reference_run: ReferenceRun, tmp_path: Path, processes: bool
) -> None:
    ids = "c001,c007" if not processes else "c003"
    out = tmp_path / "out"
    with distributed.LocalCluster(
        n_workers=1,
        threads_per_worker=1,
        processes=processes,
        host="127.0.0.1",
        protocol="tcp",  # real TCP on loopback, also for the in-process (threads) cluster
        dashboard_address=None,
    ) as cluster:
        address = cluster.scheduler_address
        assert address.startswith("tcp://127.0.0.1:")
        r = run_cli(
            [
                reference_run.book,
                "--month",
                MONTH,
                "--out",
                out,
                "--clients",
                ids,
                "--scheduler",
                address,
            ]
        )
    month_dir = out / MONTH
    m = json.loads((month_dir / "manifest.json").read_text())
    ref = reference_run.files()
    ref_manifest = json.loads(ref["manifest.json"])
    for cid in ids.split(","):
        assert m["clients"][cid] == ref_manifest["clients"][cid]
        for f in m["clients"][cid]["files"].values():
            assert (month_dir / f["path"]).read_bytes() == ref[f["path"]]
    assert r.exit_code == (1 if "c007" in ids else 0), r.output


def test_unreachable_scheduler_is_a_usage_error(
    tmp_path: Path, reference_run: ReferenceRun, monkeypatch: pytest.MonkeyPatch
) -> None:
    monkeypatch.setattr(reportgen.batch, "DASK_CONNECT_TIMEOUT_S", 1.0)
    with socket.socket() as s:  # a free port on loopback that nobody listens on
        s.bind(("127.0.0.1", 0))
        port = s.getsockname()[1]
    r = run_cli(
        [
            reference_run.book,
            "--month",
            MONTH,
            "--out",
            tmp_path / "out",
            "--clients",
            "c001",
            "--scheduler",
            f"tcp://127.0.0.1:{port}",
        ]
    )
    assert r.exit_code == 2
    assert "cannot reach the Dask scheduler" in r.output
