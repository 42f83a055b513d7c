"""The one expected way a published method declines to give a value.

A science function raises :class:`NotComputable` when its arguments are valid data but
lie outside what the method can compute for (a skinfold session without the sites the
equation needs, an age the resting equations are not defined at).  The exception
carries a short stable ``reason`` code that the analysis records and the report can
word.  Anything else a science function raises (a ``ValueError`` for an argument that is
not a number, an unknown equation name) is a defect in the caller or the data checks and
is not caught by the analysis: it reaches the batch's per-client error handling.

``NotComputable`` subclasses ``ValueError`` so that callers who only ask "was the input
usable?" keep working.
"""

from __future__ import annotations

# Reason codes carried by NotComputable (stable; templates may word them).
NOT_COMPUTABLE_REASONS: tuple[str, ...] = (
    "skinfold-sites-missing",  # the session lacks a site the equation needs
    "skinfold-no-density",  # the sum gives a body density <= 0 (far outside any equation)
    "age-outside-equation",  # an age at which the equation is not defined (age 0)
)


class NotComputable(ValueError):
    """A published method has no value for these (valid) inputs.

    Parameters
    ----------
    reason : str
        One of :data:`NOT_COMPUTABLE_REASONS`.
    message : str
        A sentence for people, naming what is missing or out of range.
    """

    def __init__(self, reason: str, message: str) -> None:
        if reason not in NOT_COMPUTABLE_REASONS:
            raise ValueError(f"unknown reason code {reason!r}")
        super().__init__(message)
        self.reason = reason
