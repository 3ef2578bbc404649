"""Where a page sends the user back to: a ``next`` value posted or in the address, if it is safe."""

from __future__ import annotations

import unicodedata

from django.http import HttpRequest
from django.shortcuts import resolve_url
from django.utils.http import url_has_allowed_host_and_scheme


def safe_next(request: HttpRequest, value: str | None, *, fallback: str) -> str:
    """``value`` when it is an address on this site, else ``fallback`` (a URL name or path).

    ``url_has_allowed_host_and_scheme`` refuses other hosts and schemes and a control character at
    the start; this also refuses one anywhere else (browsers drop tabs and newlines inside an
    address, so what was checked is not what is followed) and surrounding spaces, and asks for
    https when the request came by https. Django's sign-in page checks its own ``next``.
    """
    value = value or ""
    if (
        value == value.strip()
        and not any(unicodedata.category(character)[0] == "C" for character in value)
        and url_has_allowed_host_and_scheme(
            value, allowed_hosts={request.get_host()}, require_https=request.is_secure()
        )
    ):
        return value
    return resolve_url(fallback)
