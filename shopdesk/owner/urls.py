from django.urls import path

from shopdesk.owner import numbers_views, views

app_name = "owner"

urlpatterns = [
    path("", views.dashboard, name="dashboard"),
    path("due/<int:due_id>/remind/", views.remind, name="remind"),
    path("wording/", views.wording, name="wording"),
    path("unsubscribe/<str:token>/", views.unsubscribe, name="unsubscribe"),
    path("units/<int:unit_id>/due-dates.ics", views.unit_calendar, name="unit-calendar"),
]

urlpatterns += [
    path("numbers/", numbers_views.numbers_page, name="numbers"),
    path("numbers/<slug:table>.csv", numbers_views.numbers_csv, name="numbers-csv"),
]
