"""The shop's numbers: who may see them, the figures from completed jobs, and the CSV columns."""

from __future__ import annotations

import csv
import datetime
import io
from decimal import Decimal

import pytest
from django.utils import timezone

from shopdesk.owner import numbers
from shopdesk.workshop import services
from shopdesk.workshop.models import Status
from tests.conftest import finish_bench_work


@pytest.fixture
def completed_job(work_order, technician, oil_part):
    """The shared job (lower legs 45 min at 45.00, damper 90 min at 89.50) done with 75 bench minutes
    and ready two and a half days after check-in."""
    # As if it came in two and a half days ago.
    checked_in = timezone.now() - datetime.timedelta(days=2, hours=12)
    type(work_order).objects.filter(pk=work_order.pk).update(checked_in_at=checked_in)
    finish_bench_work(work_order, technician, oil_part)
    services.work_order_move(work_order=work_order, target=Status.FINAL_CHECK, by=technician)
    services.work_order_move(work_order=work_order, target=Status.READY_FOR_PICKUP, by=technician)
    return work_order


@pytest.mark.django_db
def test_only_the_owner_sees_the_numbers(client, role_users) -> None:
    for role, user in role_users.items():
        client.force_login(user)
        for url in ("/owner/numbers/", "/owner/numbers/weeks.csv"):
            assert client.get(url).status_code == (200 if role == "owner" else 403), (role, url)


@pytest.mark.django_db
def test_the_figures_come_from_the_completed_job(completed_job) -> None:
    period = numbers.Period.last_months(12)
    assert numbers.turnaround_overall(period) == {"jobs": 1, "average_days": 2.5, "slowest_days": 2.5}
    weeks = numbers.jobs_per_week(period)
    assert [row["jobs"] for row in weeks] == [1]
    assert weeks[0]["week"].weekday() == 0  # weeks start on Monday
    bench = {row["service"]: row for row in numbers.bench_minutes_by_service(period)}
    # 75 logged minutes shared 45:90 between the two services: 25 and 50.
    assert (
        bench["Lower-leg service"]["quoted_minutes"] == 45
        and bench["Lower-leg service"]["bench_minutes"] == 25
    )
    assert (
        bench["Damper service"]["bench_minutes"] == 50
        and bench["Damper service"]["over_quote_percent"] == -44
    )
    revenue = {row["service"]: row["revenue"] for row in numbers.revenue_by_service(period)}
    assert revenue == {"Lower-leg service": Decimal("45.00"), "Damper service": Decimal("89.50")}
    months = numbers.revenue_by_month(period)
    assert [row["revenue"] for row in months] == [Decimal("134.50")]
    oil = numbers.parts_used(period)
    # The chamber volumes of the shared spec sheet: damper 95 mL and one lower leg 15 mL.
    assert [(row["part_number"], row["quantity"]) for row in oil] == [("OIL-5WT", Decimal("110.00"))]


@pytest.mark.django_db
def test_a_cancelled_job_is_not_counted(completed_job, front_desk) -> None:
    services.work_order_move(work_order=completed_job, target=Status.CANCELLED, by=front_desk)
    period = numbers.Period.last_months(12)
    assert numbers.turnaround_overall(period)["jobs"] == 0
    assert numbers.revenue_by_service(period) == []


@pytest.mark.django_db
@pytest.mark.parametrize(
    ("table", "header"),
    [
        (
            "weeks",
            ["week starting", "jobs completed", "average turnaround (days)", "slowest turnaround (days)"],
        ),
        ("bench", ["service", "jobs", "minutes quoted", "bench minutes", "over the quote (%)"]),
        ("revenue-services", ["service", "jobs", "revenue before tax"]),
        ("revenue-months", ["month", "jobs completed", "revenue before tax"]),
        ("parts", ["part number", "name", "kind", "quantity", "unit", "jobs", "value at price"]),
    ],
)
def test_each_table_downloads_as_csv_with_its_columns(client, owner, completed_job, table, header) -> None:
    client.force_login(owner)
    response = client.get(f"/owner/numbers/{table}.csv")
    assert response.status_code == 200 and response["Content-Type"].startswith("text/csv")
    rows = list(csv.reader(io.StringIO(response.content.decode())))
    assert rows[0] == header
    assert len(rows) >= 2 and all(len(row) == len(header) for row in rows)


@pytest.mark.django_db
def test_the_page_draws_charts_and_refuses_impossible_periods(client, owner, completed_job) -> None:
    client.force_login(owner)
    page = client.get("/owner/numbers/").content.decode()
    assert page.count("<svg") >= 2 and "style=" not in page.split("<svg", 1)[1]
    assert "£134.50" in page
    for bad, words in (
        ("0", "greater than or equal to 1"),
        ("40", "less than or equal to 36"),
        ("x", "whole number"),
    ):
        response = client.get("/owner/numbers/", {"months": bad})
        assert response.status_code == 200
        assert words in " ".join(response.context["form"].errors["months"])
    assert client.get("/owner/numbers/nothing.csv").status_code == 404


def test_the_charts_have_every_week_and_month_of_the_period_even_the_empty_ones() -> None:
    from dateutil.rrule import MO, MONTHLY, WEEKLY, rrule

    now = timezone.make_aware(datetime.datetime(2026, 12, 4, 15, 0))
    period = numbers.Period.last_months(3, now=now)  # 1 October to 4 December
    busy = [
        {"week": datetime.date(2026, 10, 12), "jobs": 2},
        {"week": datetime.date(2026, 11, 30), "jobs": 1},
    ]
    weeks = numbers.every_week(period, busy)
    # The Mondays from the week holding 1 October to the one holding 4 December, by dateutil.
    mondays = [
        day.date()
        for day in rrule(
            WEEKLY, byweekday=MO, dtstart=datetime.datetime(2026, 9, 28), until=datetime.datetime(2026, 12, 4)
        )
    ]
    assert [week for week, _ in weeks] == mondays and len(mondays) == 10
    assert dict(weeks) == {
        monday: {datetime.date(2026, 10, 12): 2, datetime.date(2026, 11, 30): 1}.get(monday, 0)
        for monday in mondays
    }
    months = numbers.every_month(
        period, [{"month": datetime.date(2026, 11, 1), "revenue": Decimal("134.50")}]
    )
    firsts = [
        day.date()
        for day in rrule(MONTHLY, dtstart=datetime.datetime(2026, 10, 1), until=now.replace(tzinfo=None))
    ]
    assert months == [
        (first, Decimal("134.50") if first.month == 11 else Decimal("0.00")) for first in firsts
    ]
