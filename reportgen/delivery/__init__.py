"""Delivery of the month's reports: e-mail, PDF encryption and the delivery ledger."""
