"""The calculator page: one GET form per calculator; htmx swaps a section's result as values are typed."""

from __future__ import annotations

from django.contrib.auth.decorators import permission_required
from django.http import HttpRequest, HttpResponse
from django.shortcuts import render
from django.utils.safestring import SafeString, mark_safe
from django.views.decorators.http import require_http_methods

from shopdesk.calculators.forms import Catalogue, Outcome, calculator_page

# The bench's own permission: technicians and owners hold it, the front desk does not.
BENCH_PERMISSION = "workshop.move_on_bench_workorder"


@require_http_methods(["GET", "HEAD"])
@permission_required(BENCH_PERMISSION, raise_exception=True)
def index(request: HttpRequest) -> HttpResponse:
    page = calculator_page(request.GET, catalogue=Catalogue.load())
    outcomes = page.outcomes()
    context = {
        "sections": [{"form": form, "outcome": outcomes[name]} for name, form in page.forms.items()],
        "picker": page.picker,
        "unit_model": page.unit_model,
        "air_plot": _air_plot(outcomes["air"]),
    }
    if request.htmx and page.section:
        form = page.forms[page.section]
        context.update(form=form, outcome=outcomes[page.section])
        if page.model_picked:  # a new unit model: the whole section, with its fields and cautions
            return render(request, "calculators/sections/air.html", context)
        # Only the result, with the fields' errors swapped out of band beside their inputs.
        template = "air" if page.section == "air" else "section"
        return render(
            request, f"calculators/sections/{template}.html#result", {**context, "oob_errors": True}
        )
    return render(request, "calculators/index.html", context)


def _air_plot(outcome: Outcome | None) -> SafeString | None:
    if outcome is None or not outcome.curves:
        return None
    from shopdesk.shop import plots  # matplotlib loads only when a plot is drawn

    # Our own SVG: matplotlib's output, parsed and re-serialised by plots (labels escaped).
    return mark_safe(plots.air_spring_plot(outcome.curves, outcome.marks, id_prefix="air-plot"))
