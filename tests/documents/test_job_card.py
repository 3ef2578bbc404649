"""The job card: what it prints, that the crowded job fits one page, the QR code, the paper size."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest
from django.core.management import CommandError, call_command

from shopdesk.documents import selectors
from shopdesk.documents.renderer import job_address, render_document
from tests.documents.conftest import pdf_page_size_pt, pdf_pages, pdf_png, pdf_text


def test_it_prints_number_serial_volumes_and_torques(work_order, tmp_path):
    document = render_document(work_order, "job_card")
    assert document.mime_type == "application/pdf"
    assert document.filename == f"job-card-{work_order.number}.pdf"
    text = pdf_text(document.content, tmp_path)
    assert work_order.number in text
    assert "RF34-0001" in text
    assert "95 mL" in text  # damper cartridge volume from the conftest spec sheet
    assert "15 mL" in text
    assert "Crown pinch bolts" in text
    assert "6 N·m" in text
    assert "Ada Marsh" in text
    assert "Knocks on rebound." in text
    assert "Lower-leg service" in text and "Damper service" in text
    assert "Release all air pressure" in text  # the unit is an air fork


@pytest.mark.parametrize("paper", ["A4", "Letter"])
def test_it_fits_the_crowded_job_on_one_page_and_marks_what_it_shortened(
    crowded_work_order, tmp_path, settings, paper
):
    settings.SHOP_PAPER_SIZE = paper
    document = render_document(crowded_work_order, "job_card")
    pdf_png(document.content, tmp_path, dpi=70)
    assert pdf_pages(document.content, tmp_path) == 1
    text = pdf_text(document.content, tmp_path)
    assert "continued on the job page" in text  # the complaint was shortened, visibly
    for torque in (
        "5.5 N·m",
        "6.5 N·m",
        "7 N·m",
        "6 N·m",
        "12 N·m",
        "24 N·m",
        "26 N·m",
        "9 N·m",
        "10.5 N·m",
        "1.2 N·m",
    ):
        assert torque in text, torque
    for volume in ("128 mL", "20 mL", "21 mL", "4 mL", "33 mL", "7.5 mL"):
        assert volume in text, volume
    assert "LT38-20931-X" in text


def test_it_puts_the_jobs_address_in_a_qr_code_that_decodes(work_order, tmp_path, settings):
    zxingcpp = pytest.importorskip("zxingcpp", reason="zxing-cpp decodes the QR code (requirements-dev.txt)")
    from PIL import Image

    settings.SHOP_BASE_URL = "https://desk.shop.example"
    document = render_document(work_order, "job_card")
    image = Image.open(pdf_png(document.content, tmp_path, dpi=150))
    decoded = [result.text for result in zxingcpp.read_barcodes(image)]
    assert decoded == [f"https://desk.shop.example/jobs/{work_order.number}/"]


def test_it_uses_the_requests_address_when_there_is_one(work_order):
    assert (
        job_address(work_order, "http://bench.local:8000/")
        == f"http://bench.local:8000/jobs/{work_order.number}/"
    )


@pytest.mark.parametrize(("paper", "size"), [("A4", (595.3, 841.9)), ("Letter", (612.0, 792.0))])
def test_it_prints_on_the_shops_paper(work_order, tmp_path, settings, paper, size):
    settings.SHOP_PAPER_SIZE = paper
    width, height = pdf_page_size_pt(render_document(work_order, "job_card").content, tmp_path)
    assert (width, height) == pytest.approx(
        size, abs=0.5
    )  # ISO 216 A4 = 210 × 297 mm; US Letter = 8.5 × 11 in


def test_it_prints_no_spec_sheet_on_file_for_a_bare_model(work_order, tmp_path):
    model = work_order.unit.unit_model
    model.chambers.all().delete()
    model.torque_values.all().delete()
    text = pdf_text(render_document(work_order, "job_card").content, tmp_path)
    assert "No spec sheet on file" in text


def test_it_prints_without_email_or_complaint(work_order, tmp_path):
    work_order.customer.email = ""
    work_order.customer.save()
    work_order.complaint = ""
    work_order.save()
    text = pdf_text(render_document(work_order, "job_card").content, tmp_path)
    assert "no email on file" in text
    assert "None given." in text


def test_it_shortens_at_a_word_with_a_mark():
    text = "word " * 200
    short = selectors.shorten(text, 100)
    assert len(short) <= 100
    assert short.endswith(selectors.CONTINUED)
    assert short.removesuffix(" " + selectors.CONTINUED).endswith("word")
    assert selectors.shorten("Knocks on rebound.", 100) == "Knocks on rebound."


def test_it_counts_the_items_it_leaves_out():
    shown = selectors.first(list(range(14)), 12)
    assert shown.items == list(range(12))
    assert shown.more == 2
    assert shown.more_text == "… and 2 more (continued on the job page)"
    assert selectors.first([1, 2], 12).more_text == ""


def test_the_command_writes_the_card(work_order, tmp_path, capsys):
    output = tmp_path / "card.pdf"
    call_command("print_job_card", work_order.number, "-o", str(output))
    assert output.read_bytes().startswith(b"%PDF")
    assert work_order.number in pdf_text(output.read_bytes(), tmp_path)
    assert str(output) in capsys.readouterr().out


@pytest.mark.django_db
def test_the_command_refuses_an_unknown_number():
    with pytest.raises(CommandError, match="No job numbered 2099-99999"):
        call_command("print_job_card", "2099-99999")


def test_the_renderer_reads_static_files_from_disk_and_refuses_the_network():
    from shopdesk.documents.renderer import static_file_for

    assert static_file_for("file:///static/css/documents.css").name == "documents.css"
    for address in ("https://cdn.example/font.woff2", "http://127.0.0.1:8000/static/css/documents.css"):
        with pytest.raises(ValueError, match="only the project's static files"):
            static_file_for(address)


def test_the_renderer_takes_its_own_png_pictures_and_no_other_data_address():
    import base64

    from shopdesk.documents.renderer import png_data

    picture = base64.b64decode(selectors.qr_png("https://desk.shop.example/jobs/2026-0001/").split(",", 1)[1])
    assert picture.startswith(b"\x89PNG\r\n\x1a\n")  # the PNG signature (PNG specification, 5.2)
    assert png_data("data:image/png;base64," + base64.b64encode(picture).decode()) == picture
    for address in ("data:text/html;base64,PGgxPmhpPC9oMT4=", "data:image/svg+xml,<svg/>"):
        with pytest.raises(ValueError, match="only PNG pictures"):
            png_data(address)
    with pytest.raises(ValueError, match="broken base64"):
        png_data("data:image/png;base64,not*base64")


@pytest.mark.parametrize(
    ("variable", "value", "message"),
    [
        ("SHOP_PAPER_SIZE", "A5", "SHOP_PAPER_SIZE must be one of A4, Letter, not 'A5'."),
        ("SHOP_BASE_URL", "desk.shop.example", "SHOP_BASE_URL must be an http:// or https:// address"),
    ],
)
def test_a_bad_print_setting_stops_start_up_with_its_name(variable, value, message):
    root = Path(__file__).resolve().parents[2]
    environment = {**os.environ, "DJANGO_SETTINGS_MODULE": "shopdesk.settings", variable: value}
    result = subprocess.run(
        [sys.executable, "-c", "import django; django.setup()"],
        cwd=root,
        env=environment,
        capture_output=True,
        text=True,
        check=False,
    )
    assert result.returncode != 0
    assert message in result.stderr
