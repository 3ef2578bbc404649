"""The renderer keeps WeasyPrint's fonts for each thread's life, and documents made side by side
in two threads (a print batch beside a card printed from a page) both come out whole."""

from __future__ import annotations

import threading

from shopdesk.documents import renderer
from tests.documents.conftest import pdf_text


def _in_a_thread(work):
    result: list = []
    thread = threading.Thread(target=lambda: result.append(work()))
    thread.start()
    thread.join(60)
    return result[0]


def test_the_fonts_are_kept_for_the_thread_and_not_shared_with_another() -> None:
    mine = renderer._font_config()
    assert renderer._font_config() is mine
    assert _in_a_thread(renderer._font_config) is not mine


def test_cards_made_in_two_threads_at_once_are_both_whole(work_order, crowded_work_order, tmp_path) -> None:
    # Each thread lays its card out five times while the other does the same (the pages are read
    # from the database first: the test database is this thread's).
    def five(html):
        return [renderer._weasy_document(html).write_pdf() for _ in range(5)]

    crowded = renderer._html(crowded_work_order, "job_card", None)
    plain = renderer._html(work_order, "job_card", None)
    other: list[list[bytes]] = []
    thread = threading.Thread(target=lambda: other.append(five(crowded)))
    thread.start()
    mine = five(plain)
    thread.join(120)
    for pdf in mine:
        text = pdf_text(pdf, tmp_path)
        assert work_order.number in text and "Knocks on rebound." in text
    for pdf in other[0]:
        text = pdf_text(pdf, tmp_path)
        assert crowded_work_order.number in text and work_order.number not in text
