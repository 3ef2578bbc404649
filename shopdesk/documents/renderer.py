"""The one document renderer: given a work order and a kind of document, return (filename, MIME type, bytes).

Static files are read from disk through a url_fetcher; nothing is ever fetched over the network.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

from django.conf import settings
from django.contrib.staticfiles import finders
from django.template.loader import render_to_string

from shopdesk.workshop.models import WorkOrder

KINDS = {"job_card": "documents/job_card.html"}


@dataclass(frozen=True)
class Document:
    filename: str
    mime_type: str
    content: bytes


def _url_fetcher(url: str, *args: object, **kwargs: object) -> dict[str, object]:
    """Map /static/... to the file on disk; refuse every other address (no network)."""
    prefix = "/" + settings.STATIC_URL.lstrip("/")
    path = url.split("://", 1)[-1] if url.startswith("file://") else url
    if url.startswith(prefix) or path.startswith(prefix):
        found = finders.find(path.removeprefix(prefix))
        if found:
            return {"file_obj": Path(found).open("rb"), "filename": found}
    raise ValueError(f"Documents read only the project's static files, not {url!r}.")


def render_document(work_order: WorkOrder, kind: str, *, base_url: str = "") -> Document:
    from weasyprint import HTML  # heavy import, only where a PDF is made

    if kind not in KINDS:
        raise ValueError(f"Unknown document kind {kind!r}.")
    html = render_to_string(
        KINDS[kind],
        {
            "work_order": work_order,
            "shop_name": settings.SHOP_NAME,
            "job_address": base_url + work_order.get_absolute_url(),
        },
    )
    pdf = HTML(string=html, url_fetcher=_url_fetcher, base_url="/").write_pdf()
    return Document(
        filename=f"{kind.replace('_', '-')}-{work_order.number}.pdf", mime_type="application/pdf", content=pdf
    )
