from django.urls import path

from shopdesk.workshop import views

app_name = "workshop"

urlpatterns = [
    path("units/<int:unit_id>/check-in/", views.check_in, name="check-in"),
    path("check-in/quote/", views.quote, name="quote"),
    path("board/", views.status_board, name="board"),
    path("jobs/<str:number>/", views.work_order_detail, name="work-order"),
    path("jobs/<str:number>/move/", views.move, name="move"),
]
