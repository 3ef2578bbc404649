"""The reminder's words: the placeholders a wording may use, the defaults, and a safe fill-in.

A wording is filled with :func:`wording_fill`, a ``string.Formatter`` that accepts bare names from
:data:`PLACEHOLDERS` only: no attribute access (``{unit.customer}``), no indexing (``{unit[0]}``), no
conversions or format specs, so that an edited wording can never reach into the objects behind it.
"""

from __future__ import annotations

import string
from collections.abc import Mapping

from django.core.exceptions import ValidationError

PLACEHOLDERS: dict[str, str] = {
    "customer": "the customer's name",
    "unit": "the fork or shock: maker, model and serial number",
    "service": "the service that is due",
    "due_date": "the date it is due, e.g. 14 March 2027",
    "shop": "the shop's name",
    "unsubscribe_url": "the link that stops reminders",
}

DEFAULT_SUBJECT = "{service} due for your {unit}"
DEFAULT_BODY = """Hello {customer},

Your {unit} is due for its {service} (due date: {due_date}).

A service on time keeps the fork or shock working as it should and catches worn seals before they
cost more. Reply to this email or call us to book it in.

{shop}

You agreed to service reminders from us. To stop them, open this link: {unsubscribe_url}
"""


class _Strict(string.Formatter):
    def get_field(self, field_name: str, args: object, kwargs: Mapping[str, object]) -> tuple[object, str]:
        if field_name not in PLACEHOLDERS:
            raise KeyError(field_name)
        return kwargs[field_name], field_name


_FORMATTER = _Strict()


def wording_problems(text: str) -> list[str]:
    """What is wrong with a wording, in words; empty when it may be saved."""
    try:
        fields = [(name, spec, conversion) for _, name, spec, conversion in _FORMATTER.parse(text)]
    except ValueError as error:
        return [f"The braces do not pair up ({error}); write a literal brace as {{{{ or }}}}."]
    problems = []
    unknown = sorted({name for name, _, _ in fields if name is not None and name not in PLACEHOLDERS})
    if unknown:
        listed = ", ".join("{" + name + "}" for name in unknown)
        allowed = ", ".join("{" + name + "}" for name in PLACEHOLDERS)
        problems.append(f"Unknown placeholder {listed}. Allowed: {allowed}.")
    if any(spec or conversion for name, spec, conversion in fields if name in PLACEHOLDERS):
        problems.append("Write a placeholder bare, e.g. {due_date}, without : or ! after its name.")
    return problems


def wording_check(text: str) -> None:
    """Raise ``ValidationError`` with the problems of a wording, if any (for a form's clean)."""
    problems = wording_problems(text)
    if problems:
        raise ValidationError(problems)


def wording_fill(text: str, values: Mapping[str, str]) -> str:
    """The wording with its placeholders filled in; the wording must have passed :func:`wording_check`."""
    return _FORMATTER.vformat(text, (), {name: values[name] for name in PLACEHOLDERS})
