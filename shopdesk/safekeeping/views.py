import io

from django.contrib.auth.decorators import permission_required
from django.http import HttpRequest, HttpResponse
from django.utils import timezone
from django.views.decorators.http import require_GET

from shopdesk.safekeeping.export import write_zip


@require_GET
@permission_required("safekeeping.export_everything", raise_exception=True)
def export_everything(request: HttpRequest) -> HttpResponse:
    buffer = io.BytesIO()
    write_zip(buffer)
    stamp = timezone.localtime().strftime("%Y-%m-%d-%H%M")
    response = HttpResponse(buffer.getvalue(), content_type="application/zip")
    response["Content-Disposition"] = f'attachment; filename="shopdesk-{stamp}.zip"'
    return response
