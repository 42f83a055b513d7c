"""Shipped wording (jinja2 templates) for reports and e-mails; see reportgen.report.templating."""
