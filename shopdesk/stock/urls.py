from django.urls import path

from shopdesk.stock import views

app_name = "stock"

urlpatterns = [
    path("", views.stock_list, name="list"),
    path("parts/new/", views.part_new, name="part-new"),
    path("parts/<int:part_id>/", views.part_detail, name="part"),
    path("parts/<int:part_id>/edit/", views.part_edit, name="part-edit"),
    path("parts/<int:part_id>/receive/", views.part_receive, name="receive"),
    path("parts/<int:part_id>/adjust/", views.part_adjust, name="adjust"),
]
