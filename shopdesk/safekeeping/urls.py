from django.urls import path

from shopdesk.safekeeping import views

app_name = "safekeeping"

urlpatterns = [
    path("export.zip", views.export_everything, name="export"),
]
