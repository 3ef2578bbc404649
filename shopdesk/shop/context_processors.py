from typing import Any

from django.conf import settings
from django.http import HttpRequest


def shop(request: HttpRequest) -> dict[str, Any]:
    return {
        "shop_name": settings.SHOP_NAME,
        "shop_currency": settings.SHOP_CURRENCY,
    }
