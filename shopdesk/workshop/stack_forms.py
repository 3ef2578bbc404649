"""The shim-stack editor: a valve's stack as rows of OD × thickness × count, and the valve around it.

Shims are sized in millimetres the world over, so the rows take plain mm. Rows are a Django
formset; adding, removing and moving a row are edits of the posted rows that re-render the
editor unsaved (with htmx, in place), so nothing typed is lost on the way.
"""

from __future__ import annotations

import re
from collections.abc import Mapping
from types import SimpleNamespace
from typing import Any

from django import forms
from django.forms import formset_factory
from django.forms.formsets import BaseFormSet, ManagementForm
from django.utils.functional import cached_property

from shopdesk.calc import CalcInputError
from shopdesk.calc.plates import LARGEST_SHIM, THICKEST_SHIM, THINNEST_SHIM
from shopdesk.calc.shims import MOST_LINES, MOST_SHIMS_PER_LINE
from shopdesk.shop.ids import IdField, RecordChoiceField, id_from
from shopdesk.shop.quantities import FORCE, PRESSURE, QuantityField
from shopdesk.specs.geometry import shim_stack_for
from shopdesk.specs.models import StackFields, StackPreset, UnitModel
from shopdesk.workshop.bench_forms import STALE_FORM, VersionedForm
from shopdesk.workshop.models import ShimStackRecord

MM = {"inputmode": "decimal", "autocomplete": "off"}


class ShimRowForm(forms.Form):
    od = forms.FloatField(label="OD (mm)", min_value=1, max_value=LARGEST_SHIM, widget=forms.TextInput(MM))
    thickness = forms.FloatField(label="Thickness (mm)", widget=forms.TextInput(MM))
    count = forms.IntegerField(
        label="Count", min_value=1, max_value=MOST_SHIMS_PER_LINE, initial=1, widget=forms.TextInput(MM)
    )

    def clean_thickness(self) -> float:
        thickness = self.cleaned_data["thickness"]
        if not THINNEST_SHIM <= thickness <= THICKEST_SHIM:
            raise forms.ValidationError(
                f"A shim is {THINNEST_SHIM:g}–{THICKEST_SHIM:g} mm thick; {thickness:g} mm is not a shim "
                "(typed in inches, or the OD in this box?)."
            )
        return thickness


ROWS_DAMAGED = "The rows came back damaged (an old or changed page): check them before saving."


class _RowCounts(ManagementForm):
    """The formset's row counts, ASCII digits as every number the page posts (IntegerField read
    "٤" and "+4")."""

    TOTAL_FORMS = IdField(widget=forms.HiddenInput)
    INITIAL_FORMS = IdField(widget=forms.HiddenInput)


class _ShimRows(BaseFormSet):
    default_error_messages = {**BaseFormSet.default_error_messages, "missing_management_form": ROWS_DAMAGED}

    @cached_property
    def management_form(self) -> ManagementForm:
        if not self.is_bound:
            return BaseFormSet.management_form.func(self)
        form = _RowCounts(self.data, auto_id=self.auto_id, prefix=self.prefix, renderer=self.renderer)
        form.full_clean()
        return form

    def full_clean(self) -> None:
        super().full_clean()
        # Django says so, then replaces it with "at least 1 form" when it counts no rows.
        if (
            self.is_bound
            and not self.management_form.is_valid()
            and ROWS_DAMAGED not in self._non_form_errors
        ):
            self._non_form_errors.insert(0, ROWS_DAMAGED)


ShimRowFormSet = formset_factory(
    ShimRowForm,
    formset=_ShimRows,
    extra=0,
    min_num=1,
    validate_min=True,
    max_num=MOST_LINES,
    validate_max=True,
    absolute_max=MOST_LINES,
)
ROW_FIELDS = ("od", "thickness", "count")


class StackForm(VersionedForm):
    clamp_mm = forms.FloatField(
        label="Clamp diameter (mm)", min_value=1, max_value=LARGEST_SHIM, widget=forms.TextInput(MM)
    )
    crossover_od_mm = forms.FloatField(
        label="Crossover OD (mm)",
        required=False,
        min_value=1,
        max_value=LARGEST_SHIM,
        widget=forms.TextInput(MM),
    )
    crossover_thickness_mm = forms.FloatField(
        label="Crossover thickness (mm)",
        required=False,
        min_value=THINNEST_SHIM,
        max_value=THICKEST_SHIM,
        widget=forms.TextInput(MM),
    )
    crossover_after_line = forms.IntegerField(
        label="Crossover after line",
        required=False,
        min_value=1,
        max_value=MOST_LINES - 1,
        help_text="How many rows are face shims, in front of the crossover.",
    )
    preload_n = QuantityField(kind=FORCE, required=False, maximum=100_000, label="Preload")
    floating_rate_n_mm = forms.FloatField(
        label="Floating: spring rate (N/mm)",
        required=False,
        min_value=0.01,
        max_value=1.0e6,
        help_text="Only for a stack that floats on a spring instead of being clamped.",
        widget=forms.TextInput(MM),
    )
    piston_diameter_mm = forms.FloatField(
        label="Piston diameter (mm)",
        required=False,
        min_value=5,
        max_value=200,
        widget=forms.TextInput(MM),
        help_text="Empty: the spec sheet's damper piston.",
    )
    port_area_mm2 = forms.FloatField(
        label="Port area (mm²)",
        required=False,
        min_value=0.1,
        max_value=10_000,
        widget=forms.TextInput(MM),
        help_text="All the ports this stack covers.",
    )
    port_radius_mm = forms.FloatField(
        label="Port outer radius (mm)",
        required=False,
        min_value=0.5,
        max_value=100,
        widget=forms.TextInput(MM),
        help_text="Where the face shim seals.",
    )
    bleed_mm = forms.FloatField(
        label="Bleed diameter (mm)", required=False, min_value=0, max_value=20, widget=forms.TextInput(MM)
    )
    static_pressure_kpa = QuantityField(
        kind=PRESSURE,
        required=False,
        maximum=4000,
        label="Damper static pressure (gauge)",
        help_text="Gas charge or spring-backed IFP at rest: for the cavitation margin on rebound.",
    )
    notes = forms.CharField(required=False, max_length=300)


class StackEditor:
    """One before-or-after editor of a valve: the valve's fields and the rows of shims."""

    def __init__(
        self,
        *,
        stage: str,
        unit_model: UnitModel,
        valve: str,
        data: Mapping[str, Any] | None = None,
        initial: Mapping[str, Any] | None = None,
        rows: list[dict[str, Any]] | None = None,
    ) -> None:
        self.stage, self.unit_model, self.valve = stage, unit_model, valve
        self.prefix = f"stack-{stage}"
        self.form = StackForm(data, prefix=self.prefix, initial=initial)
        self.rows = ShimRowFormSet(data, prefix=f"{self.prefix}-rows", initial=rows or [{}])
        self.values: dict[str, Any] | None = None
        self.problems: list[str] = []  # what was wrong with a posted edit, shown above the rows

    @property
    def label(self) -> str:
        return ShimStackRecord.Stage(self.stage).label

    def is_valid(self) -> bool:
        form_ok, rows_ok = self.form.is_valid(), self.rows.is_valid()
        if not (form_ok and rows_ok):
            return False
        cleaned = self.form.cleaned_data
        lines = [
            {name: row.cleaned_data[name] for name in ROW_FIELDS}
            for row in self.rows.forms
            if row.cleaned_data
        ]
        if not lines:
            self.rows._non_form_errors = self.rows.error_class(["Give at least one shim."])
            return False
        piston = cleaned.get("piston_diameter_mm") or self.unit_model.damper_piston_diameter_mm
        ok = True
        if piston:
            for row in self.rows.forms:
                if row.cleaned_data and row.cleaned_data["od"] > piston:
                    row.add_error("od", f"Larger than the {piston:g} mm piston it sits on.")
                    ok = False
        smallest = min(line["od"] for line in lines)
        if cleaned["clamp_mm"] >= smallest:
            self.form.add_error(
                "clamp_mm",
                f"The clamp must be smaller than the smallest shim ({smallest:g} mm), or nothing bends.",
            )
            ok = False
        crossover = [
            cleaned.get(name)
            for name in ("crossover_od_mm", "crossover_thickness_mm", "crossover_after_line")
        ]
        if any(value is not None for value in crossover) and any(value is None for value in crossover):
            for name, value in zip(
                ("crossover_od_mm", "crossover_thickness_mm", "crossover_after_line"), crossover, strict=True
            ):
                if value is None:
                    self.form.add_error(name, "A crossover needs its OD, thickness and place in the stack.")
            ok = False
        if cleaned.get("floating_rate_n_mm") is not None and crossover[0] is not None:
            self.form.add_error("floating_rate_n_mm", "A floating stack with a crossover is not modelled.")
            ok = False
        if not ok:
            return False
        values = {
            "valve": self.valve,
            "shims": lines,
            **{name: cleaned.get(name) for name in StackFields.STACK_FIELDS if name != "shims"},
            "preload_n": cleaned.get("preload_n") or 0.0,
            "static_pressure_kpa": cleaned.get("static_pressure_kpa"),
            "notes": cleaned.get("notes", ""),
        }
        try:
            shim_stack_for(SimpleNamespace(**values))
        except CalcInputError as error:
            self.form.add_error(None, f"The stack cannot be modelled: {error}")
            return False
        self.values = values
        return True

    # --- Building editors ---------------------------------------------------------------------

    @classmethod
    def for_record(
        cls, record: StackFields | None, *, stage: str, unit_model: UnitModel, valve: str
    ) -> StackEditor:
        """A fresh editor showing a saved record or library preset (or empty rows)."""
        if record is None:
            return cls(stage=stage, unit_model=unit_model, valve=valve)
        initial = {name: getattr(record, name) for name in StackFields.STACK_FIELDS if name != "shims"}
        if isinstance(record, ShimStackRecord):
            initial.update(
                version=record.version, static_pressure_kpa=record.static_pressure_kpa, notes=record.notes
            )
        return cls(stage=stage, unit_model=unit_model, valve=valve, initial=initial, rows=list(record.shims))

    @classmethod
    def edited(
        cls, data: Mapping[str, Any], *, stage: str, unit_model: UnitModel, valve: str, edit: str
    ) -> StackEditor:
        """The posted editor with one row added, removed or moved (``edit`` as ``StackActionForm``
        cleans it; "" for none); nothing is saved or checked. What cannot be done is said above
        the rows, never done quietly in part."""
        prefix = f"stack-{stage}"
        problems = []
        raw_total = data.get(f"{prefix}-rows-TOTAL_FORMS", "")
        total = id_from(raw_total)
        if total is None or total > MOST_LINES:
            # Mangled: keep every row that was posted, and say so.
            problems.append(ROWS_DAMAGED)
            total = sum(
                any(f"{prefix}-rows-{index}-{name}" in data for name in ROW_FIELDS)
                for index in range(MOST_LINES)
            )
        rows = [
            {name: data.get(f"{prefix}-rows-{index}-{name}", "") for name in ROW_FIELDS}
            for index in range(total)
        ]
        action, _, where = edit.partition("-")
        index = int(where) if where else -1
        if action == "add":
            if len(rows) < MOST_LINES:
                rows.append({"od": "", "thickness": "", "count": "1"})
            else:
                problems.append(f"A stack has at most {MOST_LINES} rows.")
        elif action in {"remove", "up", "down"} and not 0 <= index < len(rows):
            problems.append(
                "That row is no longer in the stack: nothing moved. Check the rows and try again."
            )
        elif action == "remove":
            if len(rows) > 1:
                rows.pop(index)
            else:
                problems.append("A stack keeps at least one row.")
        elif action == "up" and index > 0:
            rows[index - 1], rows[index] = rows[index], rows[index - 1]
        elif action == "down" and index < len(rows) - 1:
            rows[index], rows[index + 1] = rows[index + 1], rows[index]
        initial = {name: data.get(f"{prefix}-{name}", "") for name in StackForm.base_fields}
        if initial["version"] and id_from(initial["version"]) is None:
            initial.pop("version")
            problems.append(STALE_FORM)
        editor = cls(stage=stage, unit_model=unit_model, valve=valve, initial=initial, rows=rows or [{}])
        editor.problems = problems
        return editor


ROW_EDIT = re.compile(f"(up|down|remove)-([0-9]{{1,{len(str(MOST_LINES - 1))}}})")


class StackActionForm(forms.Form):
    """Which of the editor's buttons was pressed: save, add a row, move or remove row N, start
    from the library, keep in the library."""

    action = forms.Field(required=False)  # checked against the buttons only, one message for all

    ACTIONS = ("save", "add", "load", "keep")

    def clean_action(self) -> str:
        action = self.cleaned_data["action"] or "save"  # Enter in a box, or a page without script
        match = ROW_EDIT.fullmatch(action) if isinstance(action, str) else None
        if action in self.ACTIONS or (match and int(match.group(2)) < MOST_LINES):
            return action
        raise forms.ValidationError(
            "That button is not on this page (an old or changed page): nothing was done. Check the stack "
            "and press the button again."
        )

    def is_row_edit(self) -> bool:
        return (
            self.cleaned_data["action"] == "add"
            or ROW_EDIT.fullmatch(self.cleaned_data["action"]) is not None
        )


class PresetForm(forms.Form):
    """Save the stack just entered to the model's library, under a name."""

    name = forms.CharField(max_length=80, label="Save to the library as")


class FromLibraryForm(forms.Form):
    preset = RecordChoiceField(queryset=StackPreset.objects.none(), label="Start from the library")

    def __init__(self, *args: Any, unit_model: UnitModel, valve: str, **kwargs: Any) -> None:
        super().__init__(*args, **kwargs)
        self.fields["preset"].queryset = StackPreset.objects.filter(unit_model=unit_model, valve=valve)
