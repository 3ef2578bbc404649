from django.urls import path

from shopdesk.documents import views
from shopdesk.workshop import urls as workshop_urls  # noqa: F401 (registers the <job:number> converter)

app_name = "documents"

urlpatterns = [
    path("jobs/<job:number>/job-card.pdf", views.job_card, name="job-card"),
    path("jobs/<job:number>/service-report.pdf", views.service_report, name="service-report"),
    path("print/", views.batch_new, name="batch-new"),
    path("print/<int:batch_id>/", views.batch_detail, name="batch"),
    path("print/<int:batch_id>/job-cards.pdf", views.batch_file, name="batch-file"),
]
