from django.contrib import admin
from django.urls import include, path

from shopdesk.accounts.views import admin_sign_in

admin.site.site_header = "ShopDesk administration"
admin.site.site_title = "ShopDesk"

urlpatterns = [
    path("", include("shopdesk.shop.urls")),
    path("", include("shopdesk.customers.urls")),
    path("", include("shopdesk.workshop.urls")),
    path("accounts/", include("shopdesk.accounts.urls")),
    path("calc/", include("shopdesk.calculators.urls")),
    path("stock/", include("shopdesk.stock.urls")),
    path("", include("shopdesk.documents.urls")),
    path("owner/", include("shopdesk.owner.urls")),
    path("safekeeping/", include("shopdesk.safekeeping.urls")),
    path("admin/login/", admin_sign_in, name="admin-sign-in"),
    path("admin/", admin.site.urls),
]
