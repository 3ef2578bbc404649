from django.http import HttpRequest, HttpResponse
from django.shortcuts import render
from django.views.decorators.http import require_GET


@require_GET
def home(request: HttpRequest) -> HttpResponse:
    """The front page: the search box, and the way to each role's work."""
    return render(request, "shop/home.html")
