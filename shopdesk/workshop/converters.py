"""The ``<job:number>`` path converter: a job number is the year, a dash and 4 to 7 digits.

Numbers are made as ``f"{year}-{n:04d}"`` (``services.jobs.work_order_next_number``) in a column
of 12 characters, so 4 to 7 digits after the year. ASCII digits only: a malformed number (other
scripts' digits, a sign, a space, NUL) is a 404 from the URL resolver and never reaches a query.
"""

from __future__ import annotations

import re

JOB_NUMBER_PATTERN = "[0-9]{4}-[0-9]{4,7}"
JOB_NUMBER = re.compile(JOB_NUMBER_PATTERN)


class JobNumberConverter:
    regex = JOB_NUMBER_PATTERN

    def to_python(self, value: str) -> str:
        return value

    def to_url(self, value: str) -> str:
        value = str(value)
        if not JOB_NUMBER.fullmatch(value):
            raise ValueError(f"{value!r} is not a job number")
        return value
