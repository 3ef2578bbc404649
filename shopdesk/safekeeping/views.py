from django.contrib.auth.decorators import permission_required
from django.http import FileResponse, HttpRequest, HttpResponse
from django.shortcuts import render
from django.utils import timezone
from django.views.decorators.http import require_GET

from shopdesk.safekeeping.export import zip_file


@require_GET
@permission_required("safekeeping.export_everything", raise_exception=True)
def export_everything(request: HttpRequest) -> HttpResponse:
    try:
        archive = zip_file()
    except OSError as error:
        return render(request, "safekeeping/export_failed.html", {"error": error}, status=503)
    stamp = timezone.localtime().strftime("%Y-%m-%d-%H%M")
    # Sent from the temporary file in blocks; the response closes (and so removes) it.
    return FileResponse(
        archive, as_attachment=True, filename=f"shopdesk-{stamp}.zip", content_type="application/zip"
    )
