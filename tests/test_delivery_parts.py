"""Address checks, the ledger's reading of its own history, and the mail templates."""

from __future__ import annotations

import json
from email.headerregistry import Address
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from reportgen.config import Config, ReportSettings
from reportgen.delivery.addresses import check_address
from reportgen.delivery.ledger import (
    DeliveryKey,
    Ledger,
    LedgerBusyError,
    read_ledger,
    summarise,
)
from reportgen.delivery.messages import (
    attachment_name,
    mail_environment,
    render_content,
)
from reportgen.month import ReportMonth

# --- addresses -------------------------------------------------------------------------


@pytest.mark.parametrize(
    "value",
    [
        "maren.holloway@example.org",
        "d.welna+reports@example.co.uk",
        "o'brien@example.ie",
        "x_y-z@mail.xn--bcher-kva.example",
        "  padded@example.org  ",  # surrounding white space is not part of the address
    ],
)
def test_valid_addresses(value: str) -> None:
    address, why = check_address(value)
    assert why is None and address == value.strip()


@pytest.mark.parametrize(
    ("value", "reason"),
    [
        ("", "no address"),
        (None, "no address"),
        ("   ", "no address"),
        ("ann@example", "is not a valid e-mail address"),  # no top-level domain
        ("ann@@example.org", "is not a valid e-mail address"),
        ("ann.example.org", "is not a valid e-mail address"),
        ("ann..b@example.org", "is not a valid e-mail address"),
        (".ann@example.org", "is not a valid e-mail address"),
        ("ann@-example.org", "is not a valid e-mail address"),
        ("ann@example.org.", "is not a valid e-mail address"),
        ("Ann <ann@example.org>", "not a single address"),
        ("ann@example.org; bob@example.org", "not a single address"),
        ("ann@example,org", "not a single address"),
        ("zoë@example.org", "non-ASCII"),
        ("ann@exämple.org", "non-ASCII"),
        ("a" * 65 + "@example.org", "longer than 64 characters"),
        ("ann@" + "a" * 250 + ".org", "longer than 254 characters"),
        ('"ann smith"@example.org', "not a single address"),
    ],
)
def test_invalid_addresses_are_refused_not_repaired(value: str | None, reason: str) -> None:
    address, why = check_address(value)
    assert address is None
    assert why is not None and reason in why


@settings(max_examples=300, deadline=None)
@given(st.text(max_size=80))
def test_any_cell_gives_a_verdict_and_accepted_ones_round_trip(value: str) -> None:
    address, why = check_address(value)
    assert (address is None) != (why is None)
    if address is not None:
        assert Address(addr_spec=address).addr_spec == address
        assert address == value.strip() and address.isascii()


@settings(max_examples=100, deadline=None)
@given(st.emails())
def test_generated_valid_addresses_mostly_pass(value: str) -> None:
    # hypothesis' emails() follows RFC 5322 dot-atoms and DNS labels; we refuse only
    # the parts we refuse on purpose (non-ASCII and over-long local parts).
    address, why = check_address(value)
    if value.isascii() and len(value.split("@")[0]) <= 64 and len(value) <= 254:
        assert address == value, why


# --- ledger ----------------------------------------------------------------------------

KEY = DeliveryKey("c001", "report", "ann@example.org", "ab" * 32)


def _line(result: str, key: DeliveryKey = KEY, mid: str = "<m1@x.example>") -> dict:
    return {
        "client": key.client,
        "kind": key.kind,
        "address": key.address,
        "sha256": key.sha256,
        "message_id": mid,
        "result": result,
    }


@pytest.mark.parametrize(
    ("results", "state"),
    [
        (["attempt", "sent"], "delivered"),
        (["attempt", "failed-temporary", "attempt", "sent"], "delivered"),
        (["attempt", "sent", "attempt"], "delivered"),  # a forced resend that crashed
        (["attempt"], "unconfirmed"),
        (["attempt", "failed-temporary", "attempt"], "unconfirmed"),
        (["attempt", "refused"], "pending"),
        (["attempt", "failed-temporary"], "pending"),
    ],
)
def test_ledger_history_states(results: list[str], state: str) -> None:
    history = summarise([_line(r) for r in results])
    assert history[KEY].state == state


def test_a_changed_file_or_address_is_a_new_delivery() -> None:
    history = summarise([_line("attempt"), _line("sent")])
    other_file = DeliveryKey("c001", "report", "ann@example.org", "cd" * 32)
    other_addr = DeliveryKey("c001", "report", "ann@example.net", "ab" * 32)
    assert other_file not in history and other_addr not in history


def test_skipped_lines_do_not_count_as_attempts() -> None:
    skipped = {**_line("skipped-invalid-address"), "sha256": None}
    assert summarise([skipped]) == {}


def test_torn_and_foreign_lines_are_reported(tmp_path: Path) -> None:
    path = tmp_path / "deliveries.jsonl"
    path.write_text(json.dumps(_line("sent")) + "\n[1, 2]\n\n" + '{"client": "c0')
    entries, notes = read_ledger(path)
    assert len(entries) == 1
    assert notes == [
        "deliveries.jsonl line 2 is not a ledger entry and was ignored",
        "deliveries.jsonl line 4 is not complete JSON and was ignored",
    ]


def test_ledger_appends_on_a_fresh_line_and_locks_the_month(tmp_path: Path) -> None:
    (tmp_path / "deliveries.jsonl").write_text('{"torn": ')
    with Ledger(tmp_path) as ledger:
        with pytest.raises(LedgerBusyError, match="another 'reportgen send' is running"):
            Ledger(tmp_path)
        ledger.append(_line("attempt"))
        ledger.append(_line("sent"))
    lines = (tmp_path / "deliveries.jsonl").read_text().splitlines()
    assert lines[0] == '{"torn": '
    assert [json.loads(x)["result"] for x in lines[1:]] == ["attempt", "sent"]
    with Ledger(tmp_path) as again:  # the lock is released on close
        assert again.history()[KEY].state == "delivered"


# --- templates -------------------------------------------------------------------------


def test_month_label_and_attachment_names() -> None:
    assert ReportMonth("2026-11").label == "November 2026"
    assert ReportMonth("2027-01").label == "January 2027"
    assert attachment_name("report", "2026-11", "c001") == "report-2026-11-c001.pdf"
    assert attachment_name("practitioner", "2026-11", "ab_c-1") == (
        "practitioner-summary-2026-11-ab_c-1.pdf"
    )
    assert attachment_name("report", "2026-11", "a b/ü") == "report-2026-11-a_b__.pdf"


def test_html_body_escapes_client_text_and_text_body_keeps_it() -> None:
    env = mail_environment(Config())
    content = render_content(
        env,
        "report",
        config=Config(),
        client_name="<Tom> & Jerry",
        client_id="c001",
        month=ReportMonth("2026-11"),
        filename="report-2026-11-c001.pdf",
        encrypted=False,
    )
    assert "Hello &lt;Tom&gt;," in content.html  # greeted by first name, escaped
    assert "Hello <Tom>," in content.text
    assert "meant only for &lt;Tom&gt; &amp; Jerry" in content.html
    assert content.subject == "Your monthly report for November 2026"  # no practice name set
    assert "password" not in content.text


@pytest.mark.parametrize(
    ("roster_name", "greeted"),
    [
        ("Tamsin Greaves", "Tamsin"),  # first name when the roster has one
        ("Amara Okafor-Lindqvist", "Amara"),
        ("Madonna", "Madonna"),  # a single name as written
        ("J. Smith", "J. Smith"),  # an initial is not a first name
    ],
)
def test_messages_greet_by_first_name_where_the_roster_allows(
    roster_name: str, greeted: str
) -> None:
    content = render_content(
        mail_environment(Config()),
        "report",
        config=Config(),
        client_name=roster_name,
        client_id="c001",
        month=ReportMonth("2026-11"),
        filename="report-2026-11-c001.pdf",
        encrypted=False,
    )
    assert content.text.startswith(f"Hello {greeted},\n")


def test_practice_templates_override_the_shipped_ones(tmp_path: Path) -> None:
    mail = tmp_path / "tpl" / "mail"
    mail.mkdir(parents=True)
    (mail / "report_subject.txt.j2").write_text("{{ practice.name }}: {{ month_label }}\n")
    config = Config(report=ReportSettings(templates_dir=str(tmp_path / "tpl")))
    env = mail_environment(config)
    content = render_content(
        env,
        "report",
        config=config,
        client_name="Ana",
        client_id="c001",
        month=ReportMonth("2026-11"),
        filename="f.pdf",
        encrypted=True,
    )
    assert content.subject == ": November 2026"  # the override, on one line
    assert "protected with a password" in content.text  # the rest are the shipped ones
