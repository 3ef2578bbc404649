"""Record ids as forms receive them: hidden inputs, ticked rows, picked options, button values.

Python's ``int()`` (and so Django's IntegerField and the ORM's id lookups) takes far more than a
browser ever sends: other scripts' digits ("١٢" is 12), signs, spaces, underscores, and numbers
of any length, which overflow a bigint on PostgreSQL. An id here is ASCII digits only, at most
18 of them (every 18-digit number fits a bigint); anything else is refused at its field.
"""

from __future__ import annotations

import re
from typing import Any

from django import forms

ID = re.compile(r"[0-9]{1,18}")


def id_from(value: object) -> int | None:
    """``value`` as a record id, or None where it is not one."""
    if isinstance(value, int) and not isinstance(value, bool):
        return value if 0 <= value < 10**18 else None
    if isinstance(value, str) and ID.fullmatch(value):
        return int(value)
    return None


class IdField(forms.IntegerField):
    """A whole number posted by the page itself (a version, a row's number): ASCII digits only."""

    def to_python(self, value: Any) -> int | None:
        if value in self.empty_values:
            return None
        number = id_from(value)
        if number is None:
            raise forms.ValidationError(self.error_messages["invalid"], code="invalid")
        return number


class RecordChoiceField(forms.ModelChoiceField):
    """A ModelChoiceField whose posted id is checked to be one before any query."""

    def to_python(self, value: Any) -> Any:
        if isinstance(value, str) and value not in self.empty_values and id_from(value) is None:
            raise forms.ValidationError(self.error_messages["invalid_choice"], code="invalid_choice")
        return super().to_python(value)


class RecordsChoiceField(forms.ModelMultipleChoiceField):
    """A ModelMultipleChoiceField whose posted ids are checked to be ids before any query."""

    def _check_values(self, value: Any) -> Any:
        for pk in value:
            if isinstance(pk, str) and id_from(pk) is None:
                raise forms.ValidationError(
                    self.error_messages["invalid_pk_value"], code="invalid_pk_value", params={"pk": pk}
                )
        return super()._check_values(value)
