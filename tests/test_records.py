"""Visit times for people (placer.records.utc_label), at the ends of the calendar.

Python's datetime holds the years 1 to 9999 ([PythonDocs] datetime.MINYEAR and
MAXYEAR); a stored time whose UTC value falls outside them cannot be converted
and is shown as stored.  ``%Y`` of strftime does not pad year 1 to four digits
on glibc (checked below), so the label is built from isoformat, which does.
"""

from __future__ import annotations

from datetime import datetime

from placer.records import utc_label


def test_strftime_drops_the_zeros_of_year_1_here_isoformat_keeps_them():
    when = datetime(1, 1, 1, 0, 0)
    assert when.isoformat(sep=" ", timespec="minutes") == "0001-01-01 00:00"
    assert when.strftime("%Y") in ("1", "0001")   # platform-dependent: not used


def test_labels_at_the_ends_of_the_calendar():
    assert utc_label("0001-01-01T00:00:00+00:00") == "0001-01-01 00:00 UTC"
    assert utc_label("9999-12-31T23:59:00+00:00") == "9999-12-31 23:59 UTC"
    assert utc_label("2026-11-02T10:15:00+01:00") == "2026-11-02 09:15 UTC"
    assert utc_label("0001-01-01T00:00:00") == "0001-01-01 00:00"
    assert utc_label("2026-11-02") == "2026-11-02"
    # Outside the years 1 to 9999 in UTC: shown as stored, never an OverflowError.
    assert utc_label("0001-01-01T00:30:00+01:00") == "0001-01-01T00:30:00+01:00"
    assert utc_label("9999-12-31T23:30:00-01:00") == "9999-12-31T23:30:00-01:00"
    assert utc_label("not a time") == "not a time"
