from django.urls import path

from shopdesk.customers import views

app_name = "customers"

urlpatterns = [
    path("search/", views.search, name="search"),
    path("customers/new/", views.customer_new, name="customer-new"),
    path("customers/<int:customer_id>/", views.customer_detail, name="customer"),
    path("customers/<int:customer_id>/edit/", views.customer_edit, name="customer-edit"),
    path("customers/<int:customer_id>/units/new/", views.unit_new, name="unit-new"),
    path("units/<int:unit_id>/", views.unit_detail, name="unit"),
    path("units/<int:unit_id>/edit/", views.unit_edit, name="unit-edit"),
]
