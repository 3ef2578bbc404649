from django.urls import path, register_converter

from shopdesk.workshop import bench_views, payment_views, revalve_views, views
from shopdesk.workshop.converters import JobNumberConverter

# <job:number>: a malformed job number is a 404 from the resolver (shopdesk/workshop/converters.py).
register_converter(JobNumberConverter, "job")

app_name = "workshop"

urlpatterns = [
    path("units/<int:unit_id>/check-in/", views.check_in, name="check-in"),
    path("check-in/quote/", views.quote, name="quote"),
    path("board/", views.status_board, name="board"),
    path("bench/", bench_views.bench_queue, name="bench"),
    path("jobs/<job:number>/", bench_views.work_order_detail, name="work-order"),
    path("jobs/<job:number>/move/", views.move, name="move"),
    path("jobs/<job:number>/take/", bench_views.take, name="take"),
    path("jobs/<job:number>/oil/<int:chamber_id>/", bench_views.oil_save, name="oil"),
    path("jobs/<job:number>/spring/<str:stage>/", bench_views.spring_save, name="spring"),
    path("jobs/<job:number>/parts/", bench_views.part_add, name="part"),
    path("jobs/<job:number>/labour/", bench_views.labour_save, name="labour"),
    path("jobs/<job:number>/checks/<int:check_id>/", bench_views.check_set, name="check"),
    path("jobs/<job:number>/stacks/<str:valve>/", revalve_views.valve_detail, name="valve"),
    path("jobs/<job:number>/stacks/<str:valve>/<str:stage>/", revalve_views.stack_post, name="stack"),
    path("stack-library/<int:unit_model_id>/", revalve_views.stack_library, name="stack-library"),
    path("jobs/<job:number>/void/<str:kind>/<int:record_id>/", bench_views.record_void, name="void"),
    path("jobs/<job:number>/payments/", payment_views.payment_take, name="payment"),
    path(
        "jobs/<job:number>/payments/<int:payment_id>/void/", payment_views.payment_void, name="payment-void"
    ),
]
