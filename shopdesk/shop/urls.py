from django.urls import path

from shopdesk.shop import views

app_name = "shop"

urlpatterns = [path("", views.home, name="home")]
