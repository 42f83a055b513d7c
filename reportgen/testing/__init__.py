"""Test and benchmark support that ships with the package (not part of any report).

:mod:`reportgen.testing.simulate` makes simulated clients with known truth for the
accuracy benchmark and the tests.  It is not a published method, so it lives here
and not in :mod:`reportgen.science`.
"""
