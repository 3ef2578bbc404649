import subprocess

import pytest
from django.core.management import CommandError, call_command

from shopdesk.documents.renderer import render_document


def _text(pdf: bytes, tmp_path) -> str:
    path = tmp_path / "card.pdf"
    path.write_bytes(pdf)
    return subprocess.run(["pdftotext", str(path), "-"], capture_output=True, text=True, check=True).stdout


def test_it_prints_number_serial_and_volumes(work_order, tmp_path):
    document = render_document(work_order, "job_card")
    assert document.mime_type == "application/pdf"
    text = _text(document.content, tmp_path)
    assert work_order.number in text
    assert "RF34-0001" in text
    assert "95.0" in text  # damper cartridge volume from the conftest spec sheet
    assert "Crown pinch bolts" in text


@pytest.mark.django_db
def test_it_refuses_an_unknown_number():
    with pytest.raises(CommandError):
        call_command("print_job_card", "2099-99999")
