"""Service intervals: when a unit is next due, and whether it is due now.

A unit is due when either its riding hours or its months run out, whichever
comes first. Riders rarely log hours, so the hours rule runs on the rider's
usual week: days = floor(interval hours / hours per week × 7). Months end on
the same day of the month, clamped to the month's last day (31 January + 1
month = 28 or 29 February), as ``dateutil.relativedelta`` computes.

Hours, months and days are plain numbers here; dates are ``datetime.date``.
"""

from __future__ import annotations

import datetime
import enum
import math
from fractions import Fraction
from typing import Any

from dateutil.relativedelta import relativedelta

from shopdesk.calc.errors import CalcInputError
from shopdesk.calc.units import check_number

LONGEST_INTERVAL_HOURS = 10_000.0
LONGEST_INTERVAL_MONTHS = 1_000
HOURS_IN_A_WEEK = 168.0
LONGEST_SOON_DAYS = 3_660


class DueStatus(enum.StrEnum):
    """Where a unit stands against its due date."""

    OVERDUE = "overdue"
    DUE_SOON = "due soon"
    OK = "ok"


def _date(value: Any, name: str) -> datetime.date:
    # A datetime is a date too, but adding months to one keeps a time of day a due date has no use for.
    if isinstance(value, datetime.datetime) or not isinstance(value, datetime.date):
        raise CalcInputError(f"{name} must be a date (datetime.date), got {value!r}.")
    return value


def next_due_on(
    *,
    last_service_on: datetime.date,
    interval_hours: float | None,
    interval_months: int | None,
    hours_per_week: float | None,
) -> datetime.date:
    """Date the next service falls due: the earlier of the hours rule and the months rule.

    ``interval_hours`` (riding hours, up to 10 000) and ``interval_months``
    (a whole number, 1..1000) may each be ``None``, not both. The hours rule
    applies only with ``hours_per_week`` above 0 (at most 168); an hours-only
    interval without it cannot be computed and raises :class:`CalcInputError`.
    Months by ``dateutil.relativedelta`` (same day of month, clamped to the
    month's end); hours by days = floor(interval_hours / hours_per_week × 7).
    """
    start = _date(last_service_on, "last_service_on")
    if interval_hours is None and interval_months is None:
        raise CalcInputError("Give interval_hours, interval_months or both; both are empty.")
    weekly = None
    if hours_per_week is not None:
        weekly = check_number(
            hours_per_week,
            name="hours_per_week",
            unit="h",
            minimum=0.0,
            maximum=HOURS_IN_A_WEEK,
            allow_minimum=True,
        )
    candidates: list[datetime.date] = []
    if interval_months is not None:
        months = check_number(
            interval_months,
            name="interval_months",
            minimum=1.0,
            maximum=LONGEST_INTERVAL_MONTHS,
            allow_minimum=True,
        )
        if months != int(months):
            raise CalcInputError(f"interval_months must be a whole number of months, got {months:g}.")
        try:
            candidates.append(start + relativedelta(months=int(months)))
        except (ValueError, OverflowError):
            raise CalcInputError(
                f"{int(months)} months after {start.isoformat()} falls beyond the calendar."
            ) from None
    if interval_hours is not None:
        hours = check_number(
            interval_hours, name="interval_hours", unit="h", minimum=0.0, maximum=LONGEST_INTERVAL_HOURS
        )
        if weekly:
            # Exact arithmetic on the given numbers: 50 h at 7 h a week is 50 days, not 49.
            days = math.floor(Fraction(hours) * 7 / Fraction(weekly))
            if days > (datetime.date.max - start).days:
                raise CalcInputError(
                    f"At {weekly:g} h a week, {hours:g} riding hours take {days} days, beyond the calendar: "
                    f"check hours_per_week."
                )
            candidates.append(start + datetime.timedelta(days=days))
        elif interval_months is None:
            raise CalcInputError(
                "An hours-only interval needs the rider's hours_per_week (more than 0, at most 168 h) "
                "to give a date; enter it, or an interval in months."
            )
    return min(candidates)


def due_status(*, due_on: datetime.date, today: datetime.date, soon_days: int = 30) -> DueStatus:
    """Whether a unit due on ``due_on`` is overdue, due soon or ok on ``today``.

    Overdue: due before today. Due soon: due today or within ``soon_days``
    (a whole number, 0..3660) of today. Ok: later than that.
    """
    due = _date(due_on, "due_on")
    now = _date(today, "today")
    window = check_number(
        soon_days, name="soon_days", unit="days", minimum=0.0, maximum=LONGEST_SOON_DAYS, allow_minimum=True
    )
    if window != int(window):
        raise CalcInputError(f"soon_days must be a whole number of days, got {window:g}.")
    days_left = (due - now).days
    if days_left < 0:
        return DueStatus.OVERDUE
    if days_left <= window:
        return DueStatus.DUE_SOON
    return DueStatus.OK
