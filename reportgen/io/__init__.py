"""Reading and validating the client book (roster, daily logs, skinfolds, phases).

Entry points (:mod:`reportgen.io.book` and :mod:`reportgen.io.check`):

* ``read_roster(book_dir)`` reads ``clients.csv`` (or ``.xlsx``, ``.xlsm``, ``.xls``,
  ``.ods``) and the optional ``phases.csv``;
* ``read_client(book_dir, client, phases, month_end, today, roster_problems=...)`` reads one
  client's ``logs/<id>.csv`` or workbook (``.xlsx``, ``.xlsm``, ``.xls``, ``.ods``; sheets
  ``daily``, ``skinfolds``, ``phases``) and ``skinfolds/<id>.csv``;
* ``check_book(book_dir, month=None, today=None)`` does both for every client
  (``reportgen check``).

Rules the readers apply, in one place:

* Column names match case-insensitively with surrounding spaces ignored; daily-log headers
  with units (``Weight (kg)``, ``Energy (kJ)``) are read through :mod:`reportgen.io.headers`
  and said once per file as a ``note``.  Unit columns
  (``weight_lb``, ``intake_kj``, ``height_in``, ``goal_weight_lb``) are converted once through
  :data:`reportgen.io.units.UNIT_MAP`; downstream code sees kg, kcal, cm and mm only.
* CSV text is UTF-8 with or without BOM; other files are read as cp1252 (or latin-1) with an
  ``encoding-fallback`` warning.  Workbooks are read with calamine, which applies the
  workbook's 1900 or 1904 date system to real date cells.
* Daily-log dates (:mod:`reportgen.io.dates`) are ISO text, day-first or month-first text
  decided per file from the values (or the ``[book] date_order`` setting when no value
  settles it; never guessed), date-times (first weigh-in of a day used) or real date cells;
  no serial numbers without a date format.  Other files take ISO text or real date cells.
* Intake and ``body_fat_pct`` (a scale reading, kept apart from skinfold estimates) are
  optional columns of the daily log.
* Values outside :mod:`reportgen.io.limits` are errors, except an *isolated* weigh-in far
  from the client's local level (:mod:`reportgen.io.outliers`): that is an ``outlier``
  warning, kept in ``DailyLog.weight_kg`` and marked in ``DailyLog.weight_outlier`` so the
  analysis leaves it out.  An 8.2 among 82s is such a typo; a whole series of 8s is an error.
* Rows after ``today`` are ignored with a ``future-date`` warning; rows after the report
  month's end are cut silently (they belong to a later report).
* Every problem is a :class:`~reportgen.io.model.Problem` naming file (relative to the book),
  spreadsheet row (header = 1), column, the bad value and what to do; the kinds are listed in
  :data:`reportgen.io.problems.PROBLEM_CODES`.  Inputs are only ever read.
"""
