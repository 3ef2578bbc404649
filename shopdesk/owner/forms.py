"""The owner's forms: the dashboard's filters and the reminder's wording."""

from __future__ import annotations

from typing import Any

from django import forms

from shopdesk.owner.models import MessageWording
from shopdesk.owner.selectors import DueFilters, cursor_parse
from shopdesk.owner.wording import PLACEHOLDERS, wording_check
from shopdesk.shop.ids import RecordChoiceField
from shopdesk.specs.models import ServiceType, UnitModel

LONGEST_NOT_CONTACTED_DAYS = 3650


class DueFilterForm(forms.Form):
    """The dashboard's filters, read from the query string; a wrong value is an error at its field."""

    LISTS = (("overdue", "Overdue"), ("soon", "Due soon"))
    CONSENT = (("", "Everyone"), ("yes", "Agreed to reminders"), ("no", "Not agreed"))

    list = forms.ChoiceField(choices=LISTS, required=False, widget=forms.HiddenInput)
    service_type = RecordChoiceField(
        queryset=ServiceType.objects.none(), required=False, empty_label="Every service", label="Service"
    )
    unit_model = RecordChoiceField(
        queryset=UnitModel.objects.none(), required=False, empty_label="Every model", label="Unit model"
    )
    consent = forms.ChoiceField(choices=CONSENT, required=False, label="Reminders")
    not_contacted_days = forms.IntegerField(
        required=False,
        min_value=0,
        max_value=LONGEST_NOT_CONTACTED_DAYS,
        label="Not reminded for (days)",
        help_text="Only customers sent no reminder in this many days.",
    )
    after = forms.CharField(required=False, widget=forms.HiddenInput)

    def __init__(self, *args: Any, **kwargs: Any) -> None:
        super().__init__(*args, **kwargs)
        self.fields["service_type"].queryset = ServiceType.objects.filter(active=True).order_by(
            "display_order", "name"
        )
        self.fields["unit_model"].queryset = UnitModel.objects.order_by("maker", "name", "year_from")

    def clean_after(self) -> tuple[Any, int] | None:
        raw = self.cleaned_data.get("after", "")
        if not raw:
            return None
        cursor = cursor_parse(raw)
        if cursor is None:
            raise forms.ValidationError("This page link is damaged: start again from the first page.")
        return cursor

    def filters(self) -> DueFilters:
        data = self.cleaned_data
        consent = {"yes": True, "no": False}.get(data.get("consent") or "")
        return DueFilters(
            service_type_id=data["service_type"].pk if data.get("service_type") else None,
            unit_model_id=data["unit_model"].pk if data.get("unit_model") else None,
            consent=consent,
            not_contacted_days=data.get("not_contacted_days"),
        )


def _allowed_text() -> str:
    return (
        "Placeholders: " + ", ".join("{" + name + "} " + words for name, words in PLACEHOLDERS.items()) + "."
    )


class WordingForm(forms.ModelForm):
    class Meta:
        model = MessageWording
        fields = ["subject", "body"]
        widgets = {"body": forms.Textarea(attrs={"rows": 14})}

    def __init__(self, *args: Any, **kwargs: Any) -> None:
        super().__init__(*args, **kwargs)
        self.fields["body"].help_text = _allowed_text()

    def clean_subject(self) -> str:
        subject = " ".join(self.cleaned_data["subject"].split())
        if not subject:
            raise forms.ValidationError("Enter a subject line.")
        wording_check(subject)
        return subject

    def clean_body(self) -> str:
        body = self.cleaned_data["body"].replace("\r\n", "\n").strip() + "\n"
        wording_check(body)
        if "{unsubscribe_url}" not in body:
            raise forms.ValidationError(
                "Keep {unsubscribe_url} in the message: every reminder must say how to stop them."
            )
        return body
