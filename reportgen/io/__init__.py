"""Reading and validating the client book (roster, daily logs, skinfolds, phases)."""
