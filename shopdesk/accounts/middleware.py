"""Keeping a signed-in session alive without writing it on every request."""

from __future__ import annotations

import time
from collections.abc import Callable

from django.contrib.auth import SESSION_KEY
from django.http import HttpRequest, HttpResponse

# A session ends after SESSION_COOKIE_AGE of idleness. Moving its expiry on at most once a
# minute, instead of on every request, ends an idle session up to a minute early and spares the
# database a write (and on PostgreSQL a flush to disk) on nearly every request: the search as
# typed sends one request per key.
REFRESH_AFTER_SECONDS = 60
REFRESHED_AT = "refreshed_at"


def session_refresh(
    get_response: Callable[[HttpRequest], HttpResponse],
) -> Callable[[HttpRequest], HttpResponse]:
    """Mark a signed-in session changed when it was last moved on a minute ago or more; Django's
    session middleware then saves it with a new expiry and sends the cookie again."""

    def middleware(request: HttpRequest) -> HttpResponse:
        response = get_response(request)
        session = request.session
        if SESSION_KEY in session:
            now = int(time.time())
            last = session.get(REFRESHED_AT)
            if not isinstance(last, int) or not 0 <= now - last < REFRESH_AFTER_SECONDS:
                session[REFRESHED_AT] = now
        return response

    return middleware
