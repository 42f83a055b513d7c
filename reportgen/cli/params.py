"""Option types shared by the commands (parsed once, where the text enters)."""

from __future__ import annotations

from typing import TYPE_CHECKING

import click

from reportgen.month import InvalidMonth, ReportMonth

if TYPE_CHECKING:  # click 8.2+ types ParamType by its value and input; 8.1 is not generic
    _MonthParamBase = click.ParamType[ReportMonth, object]
else:
    _MonthParamBase = click.ParamType


class ReportMonthType(_MonthParamBase):
    """``YYYY-MM`` on the command line, as a :class:`~reportgen.month.ReportMonth`.

    Anything else is a usage error (exit code 2) with a one-line message.
    """

    name = "YYYY-MM"

    def convert(
        self, value: object, param: click.Parameter | None, ctx: click.Context | None
    ) -> ReportMonth:
        if isinstance(value, ReportMonth):
            return value
        try:
            return ReportMonth(value if isinstance(value, str) else repr(value))
        except InvalidMonth as exc:
            self.fail(str(exc), param, ctx)


REPORT_MONTH = ReportMonthType()
