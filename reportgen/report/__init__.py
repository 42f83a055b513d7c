"""Rendering: view model, charts and layout of the client report, practitioner summary and overview."""
