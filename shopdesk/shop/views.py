from urllib.parse import urlsplit

from django.http import HttpRequest, HttpResponse
from django.middleware.csrf import REASON_NO_CSRF_COOKIE
from django.shortcuts import render
from django.utils.http import url_has_allowed_host_and_scheme
from django.views.decorators.http import require_GET


@require_GET
def home(request: HttpRequest) -> HttpResponse:
    """The front page: the search box, and the way to each role's work."""
    return render(request, "shop/home.html")


def csrf_failure(request: HttpRequest, reason: str = "") -> HttpResponse:
    """The shop's page for a form that Django's CSRF check refused (``CSRF_FAILURE_VIEW``).

    Django's own page carries an inline style, which the content security policy blocks, and
    speaks of tokens. This one says in plain words what happened and how to send the form again.
    It is rendered with the request, so the shop's header is there and a fresh CSRF cookie goes
    out with it: the form works once the page is reloaded. Nothing of the session is touched, so
    a signed-in user stays signed in.
    """
    return render(
        request,
        "403_csrf.html",
        {"no_cookie": reason == REASON_NO_CSRF_COOKIE, "back": _form_page(request)},
        status=403,
    )


def _form_page(request: HttpRequest) -> str | None:
    """The shop's page the form was sent from (the Referer, when it is this site's), to open again."""
    referer = request.headers.get("Referer", "")
    if not referer or not url_has_allowed_host_and_scheme(
        referer, allowed_hosts={request.get_host()}, require_https=request.is_secure()
    ):
        return None
    parts = urlsplit(referer)
    if not parts.path.startswith("/"):
        return None
    # Only the path and query: a link on this site, whatever host name the browser used.
    return f"{parts.path}?{parts.query}" if parts.query else parts.path
