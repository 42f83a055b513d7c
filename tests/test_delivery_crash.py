"""A `reportgen send` process killed while the server holds a message, then rerun."""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import time
from pathlib import Path

from _delivery_helpers import FaultyHandler, make_month, smtp_server

from reportgen.delivery.send import SendOptions, send_month

LAUNCH = "from reportgen.cli import main; main()"


def test_killed_mid_message_then_rerun_delivers_each_once(tmp_path: Path) -> None:
    # The server takes c002's whole message, then sits on its reply: the moment a
    # crash leaves the sender not knowing whether the message went.
    handler = FaultyHandler(stall={"zoe@example.com": 1}, stall_s=6.0)
    with smtp_server(handler) as srv:
        month = make_month(tmp_path, srv.port)
        proc = subprocess.Popen(
            [sys.executable, "-c", LAUNCH, "send", str(month.month_dir)],
            stdout=subprocess.DEVNULL,
            stderr=subprocess.DEVNULL,
            env={**os.environ, "MPLBACKEND": "Agg"},
        )
        try:
            deadline = time.monotonic() + 30
            while handler.data_commands < 2 and time.monotonic() < deadline:
                time.sleep(0.02)
            assert handler.data_commands == 2, "the sender never reached the second message"
        finally:
            os.kill(proc.pid, signal.SIGKILL)
            proc.wait(timeout=10)
        assert proc.returncode == -signal.SIGKILL
        assert [e["result"] for e in month.ledger()] == ["attempt", "sent", "attempt"]

        rerun = send_month(month.month_dir, SendOptions(retry_delay_s=0.01))
        got = {r.client: r.result for r in rerun.rows}
        assert got == {"c001": "already-sent", "c002": "unconfirmed", "c003": "sent"}
        assert rerun.exit_code == 1
        # someone checks the server's log (nothing queued for c002) and resends it
        done = send_month(
            month.month_dir, SendOptions(retry_delay_s=0.01, resend=frozenset({"c002"}))
        )
        assert done.exit_code == 0
        final = send_month(month.month_dir, SendOptions())
        assert {r.result for r in final.rows} == {"already-sent"}
    assert sorted(handler.recipients()) == [
        "ivo@example.net",
        "maren@example.org",
        "zoe@example.com",
    ]
