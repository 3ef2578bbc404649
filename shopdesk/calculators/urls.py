from django.urls import path

from shopdesk.calculators import views

app_name = "calculators"

urlpatterns = [path("", views.index, name="index")]
