"""Service intervals: next due date and due status."""

import datetime

import pytest
from dateutil.relativedelta import relativedelta
from hypothesis import given, settings
from hypothesis import strategies as st

from shopdesk.calc.errors import CalcInputError
from shopdesk.calc.schedule import DueStatus, due_status, next_due_on

pytestmark = pytest.mark.filterwarnings("error")

D = datetime.date


@pytest.mark.parametrize(
    ("last", "months", "expected"),
    [
        # dateutil.relativedelta: same day of month, clamped to the month's end (REFERENCES.md)
        (D(2023, 1, 31), 1, D(2023, 2, 28)),
        (D(2024, 1, 31), 1, D(2024, 2, 29)),  # leap year
        (D(2024, 2, 29), 12, D(2025, 2, 28)),
        (D(2024, 8, 31), 1, D(2024, 9, 30)),
        (D(2024, 5, 15), 24, D(2026, 5, 15)),
    ],
)
def test_a_month_interval_ends_on_the_same_day_clamped_to_the_month_end(last, months, expected):
    result = next_due_on(
        last_service_on=last, interval_hours=None, interval_months=months, hours_per_week=None
    )
    assert result == expected


@settings(max_examples=60, deadline=None)
@given(last=st.dates(min_value=D(2000, 1, 1), max_value=D(2100, 12, 31)), months=st.integers(1, 60))
def test_the_month_rule_agrees_with_dateutil(last, months):
    # dateutil.relativedelta as the reference
    result = next_due_on(last_service_on=last, interval_hours=None, interval_months=months, hours_per_week=0)
    assert result == last + relativedelta(months=months)


@pytest.mark.parametrize(
    ("hours", "per_week", "days"),
    [
        (50, 5, 70),  # 10 weeks
        (50, 7, 50),  # exactly one day per hour, no rounding down to 49
        (50, 3, 116),  # 116.67 days, floored
        (100, 2.5, 280),
    ],
)
def test_an_hours_interval_runs_on_the_riders_usual_week(hours, per_week, days):
    # days = floor(interval_hours / hours_per_week × 7) (REFERENCES.md)
    result = next_due_on(
        last_service_on=D(2024, 3, 1), interval_hours=hours, interval_months=None, hours_per_week=per_week
    )
    assert result == D(2024, 3, 1) + datetime.timedelta(days=days)


def test_the_earlier_rule_wins():
    # DOMAIN.md: due when either the hours or the months run out, whichever first
    busy = next_due_on(last_service_on=D(2024, 3, 1), interval_hours=50, interval_months=12, hours_per_week=5)
    assert busy == D(2024, 5, 10)  # 70 days beat 12 months
    idle = next_due_on(
        last_service_on=D(2024, 3, 1), interval_hours=50, interval_months=12, hours_per_week=0.5
    )
    assert idle == D(2025, 3, 1)  # 700 days lose to 12 months


@pytest.mark.parametrize("per_week", [0, None])
def test_without_hours_per_week_only_the_months_count(per_week):
    result = next_due_on(
        last_service_on=D(2024, 3, 1), interval_hours=50, interval_months=12, hours_per_week=per_week
    )
    assert result == D(2025, 3, 1)


def test_it_cannot_compute_an_hours_only_interval_without_hours_per_week():
    with pytest.raises(CalcInputError, match="needs the rider's hours_per_week"):
        next_due_on(last_service_on=D(2024, 3, 1), interval_hours=50, interval_months=None, hours_per_week=0)


def test_it_needs_at_least_one_interval():
    with pytest.raises(CalcInputError, match="both are empty"):
        next_due_on(
            last_service_on=D(2024, 3, 1), interval_hours=None, interval_months=None, hours_per_week=5
        )


@pytest.mark.parametrize(
    ("changes", "message"),
    [
        ({"interval_months": 1001}, "interval_months must be at most 1000"),
        ({"interval_months": 1.5}, "whole number of months"),
        ({"interval_months": True}, "interval_months must be a number"),
        ({"interval_hours": -5}, "interval_hours must be more than 0 h"),
        ({"interval_hours": float("nan")}, "interval_hours must be a finite number"),
        ({"hours_per_week": 200}, "hours_per_week must be at most 168 h"),
        ({"last_service_on": datetime.datetime(2024, 3, 1, 9, 30)}, "last_service_on must be a date"),
        ({"last_service_on": "2024-03-01"}, "last_service_on must be a date"),
        ({"interval_months": 1000, "last_service_on": D(9950, 1, 1)}, "beyond the calendar"),
        ({"hours_per_week": 1e-9, "interval_months": None}, "beyond the calendar"),
    ],
)
def test_it_refuses_bad_intervals(changes, message):
    values = {
        "last_service_on": D(2024, 3, 1),
        "interval_hours": 50,
        "interval_months": 12,
        "hours_per_week": 5,
    }
    values.update(changes)
    with pytest.raises(CalcInputError, match=message):
        next_due_on(**values)


@pytest.mark.parametrize(
    ("due_on", "status"),
    [
        (D(2024, 6, 14), DueStatus.OVERDUE),
        (D(2024, 6, 15), DueStatus.DUE_SOON),
        (D(2024, 7, 15), DueStatus.DUE_SOON),  # 30 days ahead: still due soon
        (D(2024, 7, 16), DueStatus.OK),
    ],
)
def test_it_gives_the_due_status(due_on, status):
    assert due_status(due_on=due_on, today=D(2024, 6, 15)) is status


def test_a_zero_window_makes_only_today_due_soon():
    assert due_status(due_on=D(2024, 6, 15), today=D(2024, 6, 15), soon_days=0) is DueStatus.DUE_SOON
    assert due_status(due_on=D(2024, 6, 16), today=D(2024, 6, 15), soon_days=0) is DueStatus.OK


def test_the_status_values_are_the_words_a_page_shows():
    assert [status.value for status in DueStatus] == ["overdue", "due soon", "ok"]
    assert DueStatus("due soon") is DueStatus.DUE_SOON
    assert isinstance(DueStatus.OK, str)


def test_it_refuses_a_fractional_window():
    with pytest.raises(CalcInputError, match="soon_days must be a whole number"):
        due_status(due_on=D(2024, 6, 15), today=D(2024, 6, 15), soon_days=2.5)
