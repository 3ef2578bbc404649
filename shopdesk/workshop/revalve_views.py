"""Revalving on the job: each valve's shim stack before and after, with the model's results beside it.

The job page lists the valves with a one-line summary each and opens a valve's editor in place
(htmx); without script, the same editor is its own page. Figures come from
:mod:`shopdesk.calc.shims`; they are estimates to compare a stack before and after, not a dyno
result, and the page says so.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from django.conf import settings
from django.contrib import messages
from django.contrib.auth.decorators import permission_required
from django.core.exceptions import PermissionDenied, ValidationError
from django.http import Http404, HttpRequest, HttpResponse
from django.shortcuts import redirect, render
from django.urls import reverse
from django.views.decorators.http import require_GET, require_POST

from shopdesk.calc import Q_, CalcInputError
from shopdesk.calc import damper as damper_calc
from shopdesk.calc import shims as shim_calc
from shopdesk.specs.geometry import oil_for, piston_for, shim_stack_for
from shopdesk.specs.models import Chamber, Oil, StackPreset, UnitModel, Valve
from shopdesk.workshop.bench_forms import STALE_FORM
from shopdesk.workshop.bench_views import _add_errors, _job
from shopdesk.workshop.models import OilRecord, ShimStackRecord, WorkOrder
from shopdesk.workshop.selectors import COMPARE_LIFT_MM, stack_comparison, stack_summaries
from shopdesk.workshop.services import RecordConflict, bench
from shopdesk.workshop.services.revalve import shim_stack_save, stack_preset_save
from shopdesk.workshop.stack_forms import FromLibraryForm, PresetForm, StackActionForm, StackEditor

STAGES = tuple(ShimStackRecord.Stage.values)
# Shaft speeds of the damping estimate: 0–2.5 m/s covers a bicycle damper's working range
# (common practice); 51 points draw a smooth curve.
VELOCITIES = Q_(np.linspace(0.0, 2.5, 51), "m/s")
PLOT_LIFT_MM = 0.5  # draw lift against load until the softest stack lifts this far


@dataclass
class StackResult:
    record: ShimStackRecord
    stack: shim_calc.ShimStack | None = None
    stages: tuple[shim_calc.Stage, ...] = ()
    problem: str = ""
    curve: shim_calc.DampingCurve | None = None
    damping_problem: str = ""
    cavitation: str = ""


@dataclass
class ValvePanel:
    work_order: WorkOrder
    valve: str
    label: str
    records: dict[str, ShimStackRecord]
    editors: dict[str, StackEditor]
    conflicts: dict[str, str] = field(default_factory=dict)
    results: dict[str, StackResult] = field(default_factory=dict)
    comparison: tuple[str, ...] = ()
    compared_at_n: float | None = None
    lift_plot: str = ""
    force_plot: str = ""
    voided: list[ShimStackRecord] = field(default_factory=list)
    library: dict[str, FromLibraryForm] = field(default_factory=dict)
    keep: dict[str, PresetForm] = field(default_factory=dict)

    @property
    def stage_rows(self) -> list[StageRow]:
        return [
            StageRow(
                stage=stage,
                editor=self.editors[stage],
                record=self.records.get(stage),
                result=self.results.get(stage),
                conflict=self.conflicts.get(stage, ""),
                library=self.library[stage],
                keep=self.keep[stage],
            )
            for stage in STAGES
        ]


@dataclass
class StageRow:
    stage: str
    editor: StackEditor
    record: ShimStackRecord | None
    result: StackResult | None
    conflict: str
    library: FromLibraryForm
    keep: PresetForm


def _valve(value: str) -> str:
    if value not in Valve.values:
        raise Http404("No such valve.")
    return value


def _damper_oil(work_order: WorkOrder, unit_model: UnitModel) -> Oil | None:
    """The oil in the damper: what the oil record says went in, else the spec sheet's damper oil."""
    damper = [
        chamber
        for chamber in unit_model.chambers.select_related("oil")
        if chamber.kind == Chamber.Kind.DAMPER
    ]
    record = (
        OilRecord.objects.filter(
            work_order=work_order, chamber__in=damper, voided_at__isnull=True, oil_part__oil__isnull=False
        )
        .select_related("oil_part__oil")
        .first()
    )
    if record is not None:
        return record.oil_part.oil
    return next((chamber.oil for chamber in damper if chamber.oil is not None), None)


def stack_results(work_order: WorkOrder, record: ShimStackRecord, oil: Oil | None) -> StackResult:
    """What the model says of one saved stack: its stages, and its damping estimate where it can."""
    result = StackResult(record=record)
    try:
        result.stack = shim_stack_for(record)
        result.stages = result.stack.stages()
    except CalcInputError as error:
        result.problem = str(error)
        return result
    unit_model = work_order.unit.unit_model
    try:
        piston = piston_for(record, unit_model)
    except CalcInputError as error:
        result.damping_problem = f"The piston cannot be modelled: {error}"
        return result
    if piston is None:
        result.damping_problem = (
            "No damping estimate: give the port area and the ports' outer radius "
            "(and the piston, if the spec sheet lacks it)."
        )
        return result
    if oil is None:
        result.damping_problem = (
            "No damping estimate: the damper's oil is on neither the spec sheet nor an oil record."
        )
        return result
    try:
        result.curve = shim_calc.damping_force(
            stack=result.stack,
            piston=piston,
            velocity=VELOCITIES,
            oil=oil_for(oil),
            temperature=Q_(settings.SHOP_TEMPERATURE_C, "degC"),
        )
    except CalcInputError as error:
        result.damping_problem = f"No damping estimate: {error}"
        return result
    if record.static_pressure_kpa is not None:
        result.cavitation = _cavitation_words(result.curve, piston, record.static_pressure_kpa)
    return result


def _cavitation_words(
    curve: shim_calc.DampingCurve, piston: shim_calc.Piston, static_gauge_kpa: float
) -> str:
    """Where the low side of the piston falls to the shop's cavitation threshold, in words."""
    static = Q_(static_gauge_kpa + 101.325, "kPa")  # gauge to absolute at standard atmosphere
    threshold = Q_(settings.SHOP_CAVITATION_THRESHOLD_KPA, "kPa")
    area = piston.displacing_area
    margin = None
    for speed, force in zip(
        curve.velocities.to("m/s").magnitude, curve.forces.to("N").magnitude, strict=True
    ):
        margin = damper_calc.cavitation_margin(
            static_pressure=static, damping_force=Q_(float(force), "N"), piston_area=area, threshold=threshold
        )
        if margin.will_cavitate:
            return (
                f"Cavitation likely from about {speed:.2f} m/s: the low side falls below "
                f"{threshold.magnitude:g} kPa absolute. More static pressure or a softer stack moves it out."
            )
    assert margin is not None
    top = curve.velocities.to("m/s").magnitude[-1]
    return f"No cavitation up to {top:g} m/s: {margin.margin.magnitude:.0f} kPa of margin left there."


def valve_panel(
    work_order: WorkOrder,
    valve: str,
    *,
    editors: dict[str, StackEditor] | None = None,
    conflicts: dict[str, str] | None = None,
    plots: bool = True,
) -> ValvePanel:
    unit_model = work_order.unit.unit_model
    all_records = list(
        ShimStackRecord.objects.filter(work_order=work_order, valve=valve).select_related(
            "recorded_by", "voided_by"
        )
    )
    live = {record.stage: record for record in all_records if not record.is_void}
    editors = dict(editors or {})
    for stage in STAGES:
        if stage not in editors:
            start = live.get(stage)
            if start is None and stage == ShimStackRecord.Stage.AFTER:
                start = live.get(ShimStackRecord.Stage.BEFORE)  # a revalve starts from the stack found
            editor = StackEditor.for_record(start, stage=stage, unit_model=unit_model, valve=valve)
            if start is not None and start.stage != stage:
                editor.form.initial.pop("version", None)
            editors[stage] = editor
    panel = ValvePanel(
        work_order=work_order,
        valve=valve,
        label=Valve(valve).label,
        records=live,
        editors=editors,
        conflicts=conflicts or {},
        voided=[record for record in all_records if record.is_void],
        library={
            stage: FromLibraryForm(prefix=f"library-{stage}", unit_model=unit_model, valve=valve)
            for stage in STAGES
        },
        keep={stage: PresetForm(prefix=f"keep-{stage}") for stage in STAGES},
    )
    oil = _damper_oil(work_order, unit_model) if live else None
    panel.results = {stage: stack_results(work_order, record, oil) for stage, record in live.items()}
    before, after = (panel.records.get(stage) for stage in STAGES)
    if before is not None and after is not None:
        compared = stack_comparison(before, after)
        if compared is not None:
            panel.compared_at_n, panel.comparison = compared
    if plots:
        panel.lift_plot, panel.force_plot = _plots(panel)
    return panel


def _plots(panel: ValvePanel) -> tuple[str, str]:
    stacks = [(stage, result) for stage, result in panel.results.items() if result.stack is not None]
    if not stacks:
        return "", ""
    from shopdesk.shop.plots import line_plot

    top = min(
        result.stack.load_for_lift(Q_(PLOT_LIFT_MM, "mm")).magnitude for _, result in stacks if result.stack
    )
    top = max(top * 1.25, 1.0)
    loads = np.linspace(0.0, top, 81)
    lift_curves = []
    force_curves = []
    for stage, result in sorted(stacks):
        assert result.stack is not None
        label = ShimStackRecord.Stage(stage).label
        style = "main" if stage == ShimStackRecord.Stage.AFTER else "plain"
        lifts = [result.stack.lift(Q_(float(load), "N")).magnitude for load in loads]
        lift_curves.append((label, loads, lifts, style))
        if result.curve is not None:
            force_curves.append(
                (
                    label,
                    result.curve.velocities.to("m/s").magnitude,
                    result.curve.forces.to("N").magnitude,
                    style,
                )
            )
    prefix = f"stack-{panel.valve}"
    lift_plot = line_plot(
        lift_curves,
        x_label="Load on the face shim's edge (N)",
        y_label="Lift at the face shim's edge (mm)",
        title=f"{panel.label}: lift against load",
        id_prefix=f"{prefix}-lift",
    )
    force_plot = ""
    if force_curves:
        force_plot = line_plot(
            force_curves,
            x_label="Shaft speed (m/s)",
            y_label="Damping force (N)",
            title=f"{panel.label}: estimated damping force against shaft speed",
            id_prefix=f"{prefix}-force",
        )
    return lift_plot, force_plot


# --- Views --------------------------------------------------------------------------------------


def _render_panel(
    request: HttpRequest, work_order: WorkOrder, panel: ValvePanel, *, void_refused: object = None
) -> HttpResponse:
    template = "workshop/valve.html#panel" if request.htmx else "workshop/valve.html"
    context = {
        "summaries": stack_summaries(work_order) if request.htmx else None,
        "work_order": work_order,
        "panel": panel,
        "can_record": work_order.status in bench.RECORDING_STATUSES,
        "compare_lift_mm": COMPARE_LIFT_MM,
        "void_refused": void_refused,
    }
    return render(request, template, context)


def render_valve_void_refused(
    request: HttpRequest, work_order: WorkOrder, record: ShimStackRecord, refusal: object
) -> HttpResponse:
    """The valve's page again after a refused void of one of its stacks, the refusal at its form."""
    return _render_panel(request, work_order, valve_panel(work_order, record.valve), void_refused=refusal)


@require_GET
@permission_required("workshop.view_shimstackrecord", raise_exception=True)
def valve_detail(request: HttpRequest, number: str, valve: str) -> HttpResponse:
    work_order = _job(number)
    return _render_panel(request, work_order, valve_panel(work_order, _valve(valve)))


@require_POST
@permission_required("workshop.change_shimstackrecord", raise_exception=True)
def stack_post(request: HttpRequest, number: str, valve: str, stage: str) -> HttpResponse:
    """One before-or-after editor posted: an edit of its rows, a start from the library, a save,
    or keeping the stack in the library."""
    work_order = _job(number)
    valve = _valve(valve)
    if stage not in STAGES:
        raise Http404("No such stage.")
    unit_model = work_order.unit.unit_model

    def again(editor: StackEditor, **forms: object) -> HttpResponse:
        """The panel with this stage's editor as posted (nothing typed lost), and its forms' errors."""
        panel = valve_panel(work_order, valve, editors={stage: editor})
        for name, form in forms.items():
            getattr(panel, name)[stage] = form
        return _render_panel(request, work_order, panel)

    pressed = StackActionForm(request.POST)
    if not pressed.is_valid():
        editor = StackEditor.edited(request.POST, stage=stage, unit_model=unit_model, valve=valve, edit="")
        editor.problems.extend(pressed.errors["action"])
        return again(editor)
    action = pressed.cleaned_data["action"]
    if pressed.is_row_edit():
        return again(
            StackEditor.edited(request.POST, stage=stage, unit_model=unit_model, valve=valve, edit=action)
        )
    if action == "load":
        library = FromLibraryForm(request.POST, prefix=f"library-{stage}", unit_model=unit_model, valve=valve)
        if not library.is_valid():
            editor = StackEditor.edited(
                request.POST, stage=stage, unit_model=unit_model, valve=valve, edit=""
            )
            return again(editor, library=library)
        preset = library.cleaned_data["preset"]
        editor = StackEditor.for_record(preset, stage=stage, unit_model=unit_model, valve=valve)
        posted = StackEditor.edited(request.POST, stage=stage, unit_model=unit_model, valve=valve, edit="")
        if posted.form.initial.get("version"):  # the version of the record being edited goes on
            editor.form.initial["version"] = posted.form.initial["version"]
        editor.problems = [problem for problem in posted.problems if problem == STALE_FORM]
        messages.info(
            request, f"Started from “{preset.name}”: check it against the stack on the bench, then save."
        )
        return again(editor)
    if action == "keep" and not request.user.has_perm("specs.add_stackpreset"):
        raise PermissionDenied("You may not add to the stack library.")
    editor = StackEditor(stage=stage, unit_model=unit_model, valve=valve, data=request.POST)
    if action == "keep":
        keep = PresetForm(request.POST, prefix=f"keep-{stage}")
        stack_ok, name_ok = editor.is_valid(), keep.is_valid()
        if not (stack_ok and name_ok):
            return again(editor, keep=keep)
        assert editor.values is not None
        try:
            preset = stack_preset_save(
                unit_model=unit_model,
                valve=valve,
                name=keep.cleaned_data["name"],
                values=editor.values,
                by=request.user,
            )
        except ValidationError as error:
            keep.add_error("name", error.messages)
            return again(editor, keep=keep)
        messages.success(request, f"Kept in the {unit_model} library as “{preset.name}”.")
        return again(editor)
    if not editor.is_valid():
        return again(editor)
    assert editor.values is not None
    record = ShimStackRecord.objects.filter(
        work_order=work_order, valve=valve, stage=stage, voided_at__isnull=True
    ).first()
    version = editor.form.cleaned_data.get("version")
    try:
        shim_stack_save(
            work_order=work_order,
            valve=valve,
            stage=stage,
            values=editor.values,
            by=request.user,
            record=record,
            version=bench.expected_version(record, version),
        )
    except RecordConflict as conflict:
        fresh = StackEditor.for_record(conflict.current, stage=stage, unit_model=unit_model, valve=valve)
        panel = valve_panel(work_order, valve, editors={stage: fresh}, conflicts={stage: str(conflict)})
        return _render_panel(request, work_order, panel)
    except ValidationError as error:
        _add_errors(editor.form, error)
        return _render_panel(request, work_order, valve_panel(work_order, valve, editors={stage: editor}))
    label = f"{Valve(valve).label}, {ShimStackRecord.Stage(stage).label.lower()}"
    messages.success(request, f"Shim stack saved: {label}.")
    if request.htmx:
        return _render_panel(request, work_order, valve_panel(work_order, valve))
    return redirect(reverse("workshop:valve", args=[work_order.number, valve]) + f"#stack-{stage}")


@require_GET
@permission_required("specs.view_stackpreset", raise_exception=True)
def stack_library(request: HttpRequest, unit_model_id: int) -> HttpResponse:
    """The stacks the shop keeps for one unit model, by valve."""
    unit_model = UnitModel.objects.filter(pk=unit_model_id).first()
    if unit_model is None:
        raise Http404("No such unit model.")
    presets = list(StackPreset.objects.filter(unit_model=unit_model).select_related("created_by"))
    by_valve = [(label, [p for p in presets if p.valve == valve]) for valve, label in Valve.choices]
    return render(request, "workshop/stack_library.html", {"unit_model": unit_model, "by_valve": by_valve})
