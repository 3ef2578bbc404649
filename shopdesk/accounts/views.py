from django.core.exceptions import PermissionDenied
from django.http import HttpRequest, HttpResponse
from django.shortcuts import redirect
from django.urls import reverse
from django.utils.http import url_has_allowed_host_and_scheme


def admin_sign_in(request: HttpRequest) -> HttpResponse:
    """The admin has no sign-in page of its own: the shop's one sign-in serves it.

    Reached only by signed-in users (the sign-in middleware sends others to sign in first).
    """
    target = request.GET.get("next") or reverse("admin:index")
    if not url_has_allowed_host_and_scheme(target, allowed_hosts={request.get_host()}):
        target = reverse("admin:index")
    if request.user.is_staff:
        return redirect(target)
    raise PermissionDenied("Spec sheets and settings are for the owner.")
