"""The print page's form: print today's job cards, or the jobs ticked."""

from __future__ import annotations

from typing import Any

from django import forms

from shopdesk.workshop.converters import JOB_NUMBER


class JobNumbersField(forms.Field):
    """Ticked job numbers, each as a job card prints it ("2026-0042"): ASCII digits only, so
    nothing else (a NUL, which PostgreSQL refuses in any text, other scripts' digits) reaches a
    query. Whether each job exists is the service's question."""

    widget = forms.MultipleHiddenInput

    def to_python(self, value: Any) -> list[str]:
        if not value:
            return []
        if not isinstance(value, (list, tuple)):
            raise forms.ValidationError("Tick the jobs to print.", code="invalid")
        return [str(number) for number in value]

    def validate(self, value: list[str]) -> None:
        super().validate(value)
        for number in value:
            if not JOB_NUMBER.fullmatch(number):
                shown = number if len(number) <= 20 else number[:20] + "…"
                raise forms.ValidationError(
                    "“%(number)s” is not a job number (the year, a dash and the number: 2026-0042).",
                    code="invalid",
                    params={"number": shown},
                )


class BatchForm(forms.Form):
    which = forms.ChoiceField(
        choices=[("today", "Today's job cards"), ("picked", "The ticked jobs")],
        error_messages={
            "required": "Press one of the two print buttons.",
            "invalid_choice": "Press one of the two print buttons.",
        },
    )
    numbers = JobNumbersField(required=False)
