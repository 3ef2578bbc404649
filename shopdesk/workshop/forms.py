from __future__ import annotations

import datetime
from decimal import Decimal
from typing import Any

from django import forms
from django.utils import timezone

from shopdesk.shop.ids import RecordsChoiceField
from shopdesk.specs.models import ServiceType
from shopdesk.stock.forms import MoneyField
from shopdesk.workshop.models import Payment


class CheckInForm(forms.Form):
    service_types = RecordsChoiceField(
        queryset=ServiceType.objects.none(),
        widget=forms.CheckboxSelectMultiple,
        label="Services asked for",
        error_messages={"required": "Tick at least one service."},
    )
    complaint = forms.CharField(
        required=False,
        max_length=4000,
        widget=forms.Textarea(attrs={"rows": 4}),
        help_text="What the customer says, in their words.",
    )
    came_with = forms.CharField(required=False, max_length=200, label="Came with the unit")
    promised_on = forms.DateField(required=False, widget=forms.DateInput(attrs={"type": "date"}))

    def __init__(self, *args: Any, **kwargs: Any) -> None:
        super().__init__(*args, **kwargs)
        self.fields["service_types"].queryset = ServiceType.objects.filter(active=True).order_by(
            "display_order", "name"
        )

    def clean_promised_on(self) -> datetime.date | None:
        promised = self.cleaned_data.get("promised_on")
        today = timezone.localdate()
        if promised is not None and promised < today:
            raise forms.ValidationError("The promised date cannot be in the past.")
        if promised is not None and promised > today + datetime.timedelta(days=365):
            raise forms.ValidationError("The promised date is more than a year away; check the year.")
        return promised


class MoveForm(forms.Form):
    to = forms.CharField(max_length=20)
    note = forms.CharField(required=False, max_length=500)


class PaymentForm(forms.Form):
    """Money taken at the desk; the amount starts at what is still owed."""

    amount = MoneyField(
        max_digits=9,
        decimal_places=2,
        min_value=Decimal("0.01"),
        help_text="What the customer paid now; less than the total is a part payment.",
    )
    method = forms.ChoiceField(choices=Payment.Method.choices)
    reference = forms.CharField(
        max_length=100, required=False, help_text="Optional: the card slip's number, a transfer's reference."
    )


class PaymentVoidForm(forms.Form):
    reason = forms.CharField(max_length=200, label="Why is it wrong?")
