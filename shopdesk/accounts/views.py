from django.core.exceptions import PermissionDenied
from django.http import HttpRequest, HttpResponse
from django.shortcuts import redirect

from shopdesk.shop.redirects import safe_next


def admin_sign_in(request: HttpRequest) -> HttpResponse:
    """The admin has no sign-in page of its own: the shop's one sign-in serves it.

    Reached only by signed-in users (the sign-in middleware sends others to sign in first).
    """
    target = safe_next(request, request.GET.get("next"), fallback="admin:index")
    if request.user.is_staff:
        return redirect(target)
    raise PermissionDenied("Spec sheets and settings are for the owner.")
