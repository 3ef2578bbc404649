"""The one document renderer: given a work order and a kind of document, return (filename, MIME type, bytes).

The pages, the batch and the commands all call it. Static files are read from disk through a
url_fetcher, and a picture the renderer made itself (the job card's QR code) comes in a ``data:``
address; nothing is ever fetched over the network. Fonts are the system's (DejaVu Sans,
installed by `.ci/run`).
"""

from __future__ import annotations

import base64
import binascii
import functools
import mimetypes
import threading
from collections.abc import Callable, Iterable
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from django.conf import settings
from django.contrib.staticfiles import finders
from django.template.loader import render_to_string
from django.utils import timezone

from shopdesk.documents import selectors
from shopdesk.workshop.models import WorkOrder

PDF = "application/pdf"


@dataclass(frozen=True)
class Kind:
    template: str
    context: Callable[..., dict[str, Any]]
    file_prefix: str


KINDS = {
    "job_card": Kind(
        "documents/job_card.html",
        lambda work_order, job_address: selectors.job_card_context(work_order, job_address=job_address),
        "job-card",
    ),
    "service_report": Kind(
        "documents/service_report.html",
        lambda work_order, job_address: selectors.service_report_context(work_order),
        "service-report",
    ),
}


@dataclass(frozen=True)
class Document:
    filename: str
    mime_type: str
    content: bytes


def static_file_for(url: str) -> Path:
    """The file on disk behind a /static/... address; ValueError for every other address (no network)."""
    prefix = "/" + settings.STATIC_URL.lstrip("/")
    path = url.removeprefix("file://") if url.startswith("file://") else url
    if path.startswith(prefix):
        found = finders.find(path.removeprefix(prefix).split("?")[0])
        if found:
            return Path(found)
    raise ValueError(f"Documents read only the project's static files, not {url!r}.")


PNG_DATA = "data:image/png;base64,"


def png_data(url: str) -> bytes:
    """The picture in a ``data:image/png;base64,`` address; ValueError for any other ``data:``."""
    if not url.startswith(PNG_DATA):
        raise ValueError(f"Documents take only PNG pictures in a data: address, not {url[:40]!r}.")
    try:
        return base64.b64decode(url.removeprefix(PNG_DATA), validate=True)
    except binascii.Error as error:
        raise ValueError("A data: address with broken base64.") from error


@functools.cache
def _url_fetcher() -> Any:
    from weasyprint.urls import URLFetcher, URLFetcherResponse

    class StaticFilesOnly(URLFetcher):  # type: ignore[misc]
        """WeasyPrint's fetcher, limited to the project's static files read from disk and the
        renderer's own PNG pictures."""

        def fetch(self, url: str, headers: object = None) -> Any:
            if url.startswith("data:"):
                return URLFetcherResponse(url, png_data(url), {"Content-Type": "image/png"})
            path = static_file_for(url)
            return URLFetcherResponse(url, path.read_bytes(), {"Content-Type": _content_type(path)})

    return StaticFilesOnly(fail_on_errors=True)


def _content_type(path: Path) -> str:
    return mimetypes.guess_type(path.name)[0] or "application/octet-stream"


def job_address(work_order: WorkOrder, base_url: str | None = None) -> str:
    """The job page's full address: the request's own when there is one, else SHOP_BASE_URL."""
    return (base_url or settings.SHOP_BASE_URL).rstrip("/") + work_order.get_absolute_url()


def _html(work_order: WorkOrder, kind: str, base_url: str | None) -> str:
    if kind not in KINDS:
        raise ValueError(f"Unknown document kind {kind!r}.")
    context = KINDS[kind].context(work_order, job_address(work_order, base_url))
    context.update(
        {
            "shop_name": settings.SHOP_NAME,
            "paper_size": settings.SHOP_PAPER_SIZE,
            "printed_at": timezone.localtime(),
        }
    )
    return render_to_string(KINDS[kind].template, context)


STYLESHEET = "css/documents.css"


@functools.cache
def _stylesheet() -> Any:
    """The documents' print CSS, parsed once per process (parsing it cost ~100 ms a document)."""
    from weasyprint import CSS

    path = static_file_for("/" + settings.STATIC_URL.lstrip("/") + STYLESHEET)
    return CSS(string=path.read_text(encoding="utf-8"), url_fetcher=_url_fetcher(), base_url="/")


_per_thread = threading.local()


def _font_config() -> Any:
    """WeasyPrint's fonts, kept for the thread's life: a fresh configuration for each document (a
    new Pango font map, every font loaded and measured again) cost ~16 ms of a ~95 ms card. One per
    thread, because Pango's font map is not to be shared between threads and a print batch renders
    in a thread of its own. The documents use system fonts only (no @font-face), so nothing is
    added to it from one document to the next."""
    config = getattr(_per_thread, "font_config", None)
    if config is None:
        from weasyprint.text.fonts import FontConfiguration

        config = _per_thread.font_config = FontConfiguration()
    return config


def _weasy_document(html: str) -> Any:
    from weasyprint import HTML  # heavy import, only where a PDF is made

    return HTML(string=html, url_fetcher=_url_fetcher(), base_url="/").render(
        stylesheets=[_stylesheet()], font_config=_font_config()
    )


def render_document(work_order: WorkOrder, kind: str, *, base_url: str | None = None) -> Document:
    """One document for one job. Raises ``selectors.DocumentRefused`` when the job is not ready for it."""
    pdf = _weasy_document(_html(work_order, kind, base_url)).write_pdf()
    return Document(filename=f"{KINDS[kind].file_prefix}-{work_order.number}.pdf", mime_type=PDF, content=pdf)


def render_job_cards(
    work_orders: Iterable[WorkOrder],
    *,
    base_url: str | None = None,
    progress: Callable[[int], None] | None = None,
    filename: str = "job-cards.pdf",
) -> Document:
    """The job cards of several jobs as one PDF, one card a page; ``progress`` hears each card done."""
    pages: list[Any] = []
    first_document = None
    for count, work_order in enumerate(work_orders, start=1):
        document = _weasy_document(_html(work_order, "job_card", base_url))
        first_document = first_document or document
        pages.extend(document.pages)
        if progress:
            progress(count)
    if first_document is None:
        raise selectors.DocumentRefused("No jobs to print.")
    return Document(filename=filename, mime_type=PDF, content=first_document.copy(pages).write_pdf())
