"""The shop's numbers: tables, server-side SVG charts and a CSV download of each table. Owner only."""

from __future__ import annotations

import csv
import math
from collections.abc import Callable
from typing import Any

from django import forms
from django.contrib.auth.decorators import permission_required
from django.http import Http404, HttpRequest, HttpResponse
from django.shortcuts import render
from django.views.decorators.http import require_GET

from shopdesk.owner import numbers

LONGEST_MONTHS = 36


class PeriodForm(forms.Form):
    months = forms.IntegerField(
        min_value=1,
        max_value=LONGEST_MONTHS,
        required=False,
        label="Months",
        help_text="This month and the ones before it.",
    )


# Each table: its title, the function that computes it, and its CSV columns (key, heading).
TABLES: dict[str, tuple[str, Callable[[numbers.Period], list[dict]], list[tuple[str, str]]]] = {
    "weeks": (
        "Jobs completed per week",
        numbers.jobs_per_week,
        [
            ("week", "week starting"),
            ("jobs", "jobs completed"),
            ("average_days", "average turnaround (days)"),
            ("slowest_days", "slowest turnaround (days)"),
        ],
    ),
    "bench": (
        "Bench minutes per service against the quote",
        numbers.bench_minutes_by_service,
        [
            ("service", "service"),
            ("jobs", "jobs"),
            ("quoted_minutes", "minutes quoted"),
            ("bench_minutes", "bench minutes"),
            ("over_quote_percent", "over the quote (%)"),
        ],
    ),
    "revenue-services": (
        "Revenue by service",
        numbers.revenue_by_service,
        [("service", "service"), ("jobs", "jobs"), ("revenue", "revenue before tax")],
    ),
    "revenue-months": (
        "Revenue by month",
        numbers.revenue_by_month,
        [("month", "month"), ("jobs", "jobs completed"), ("revenue", "revenue before tax")],
    ),
    "parts": (
        "Parts and oil used",
        numbers.parts_used,
        [
            ("part_number", "part number"),
            ("name", "name"),
            ("kind", "kind"),
            ("quantity", "quantity"),
            ("unit", "unit"),
            ("jobs", "jobs"),
            ("value", "value at price"),
        ],
    ),
}


def _period(request: HttpRequest) -> tuple[PeriodForm, numbers.Period | None]:
    form = PeriodForm(request.GET or None)
    if form.is_bound and not form.is_valid():
        return form, None
    months = (form.cleaned_data.get("months") if form.is_bound else None) or 12
    return form, numbers.Period.last_months(months)


@require_GET
@permission_required("owner.view_dashboard", raise_exception=True)
def numbers_page(request: HttpRequest) -> HttpResponse:
    from shopdesk.shop.plots import bar_plot  # matplotlib: only this page pays for its import

    form, period = _period(request)
    context: dict[str, Any] = {"form": form, "period": period, "query": request.GET.urlencode()}
    if period is not None:
        computed = {key: compute(period) for key, (_, compute, _) in TABLES.items()}
        context["tables"] = [
            {
                "key": key,
                "title": title,
                "headings": [heading for _, heading in columns],
                "rows": [[(name, row[name]) for name, _ in columns] for row in computed[key]],
            }
            for key, (title, _, columns) in TABLES.items()
        ]
        context["overall"] = numbers.turnaround_overall(period)
        weeks = numbers.every_week(period, computed["weeks"])
        months = numbers.every_month(period, computed["revenue-months"])
        context["charts"] = {
            "weeks": bar_plot(
                [f"{week:%d %b}" for week, _ in weeks],
                [jobs for _, jobs in weeks],
                y_label="Jobs completed",
                title="Jobs completed per week",
                id_prefix="chart-weeks",
                every_nth_label=math.ceil(len(weeks) / 6),  # six dates fit the chart's width
            )
            if computed["weeks"]
            else "",
            "months": bar_plot(
                [f"{month:%b %y}" for month, _ in months],
                [float(revenue) for _, revenue in months],
                y_label="Revenue before tax",
                title="Revenue by month",
                id_prefix="chart-months",
                every_nth_label=math.ceil(len(months) / 12),
            )
            if computed["revenue-months"]
            else "",
        }
    return render(request, "owner/numbers.html", context)


@require_GET
@permission_required("owner.view_dashboard", raise_exception=True)
def numbers_csv(request: HttpRequest, table: str) -> HttpResponse:
    if table not in TABLES:
        raise Http404("No such table.")
    form, period = _period(request)
    if period is None:
        return render(request, "owner/numbers.html", {"form": form, "period": None}, status=400)
    _, compute, columns = TABLES[table]
    response = HttpResponse(content_type="text/csv; charset=utf-8")
    response["Content-Disposition"] = f'attachment; filename="{table}-{period.start:%Y-%m}.csv"'
    writer = csv.writer(response)
    writer.writerow([heading for _, heading in columns])
    for row in compute(period):
        writer.writerow(["" if row[key] is None else row[key] for key, _ in columns])
    return response
