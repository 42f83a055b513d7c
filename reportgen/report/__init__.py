"""Rendering: view model, charts and layout of the client report, summary and overview."""

from .client import render_client_report
from .overview import make_overview_line, render_overview
from .overview_model import OverviewLine
from .practitioner import render_practitioner_summary

__all__ = [
    "OverviewLine",
    "make_overview_line",
    "render_client_report",
    "render_overview",
    "render_practitioner_summary",
]
