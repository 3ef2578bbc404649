"""Document fixtures: a crowded job, and the poppler tools that read a PDF back.

pdftotext, pdfinfo and pdftoppm come from poppler-utils. Where they are missing the tests that
need them skip with a reason, except in CI (CI=true), where they fail.
"""

from __future__ import annotations

import os
import shutil
import subprocess
from pathlib import Path

import pytest


def _need(tool: str) -> None:
    if shutil.which(tool) is None:
        message = f"{tool} is not installed (apt-get install poppler-utils); the PDF checks need it"
        if os.environ.get("CI") == "true":
            pytest.fail(message)
        pytest.skip(message)


def pdf_text(pdf: bytes, tmp_path: Path) -> str:
    _need("pdftotext")
    path = tmp_path / "document.pdf"
    path.write_bytes(pdf)
    text = subprocess.run(["pdftotext", str(path), "-"], capture_output=True, text=True, check=True).stdout
    return " ".join(text.split())  # lines wrap inside boxes: compare words, not line breaks


def pdf_pages(pdf: bytes, tmp_path: Path) -> int:
    _need("pdfinfo")
    path = tmp_path / "document.pdf"
    path.write_bytes(pdf)
    info = subprocess.run(["pdfinfo", str(path)], capture_output=True, text=True, check=True).stdout
    return int(next(line.split()[1] for line in info.splitlines() if line.startswith("Pages:")))


def pdf_page_size_pt(pdf: bytes, tmp_path: Path) -> tuple[float, float]:
    _need("pdfinfo")
    path = tmp_path / "document.pdf"
    path.write_bytes(pdf)
    info = subprocess.run(["pdfinfo", str(path)], capture_output=True, text=True, check=True).stdout
    line = next(line for line in info.splitlines() if line.startswith("Page size:"))
    width, _, height = line.split(":", 1)[1].split()[:3]
    return float(width), float(height)


def pdf_png(pdf: bytes, tmp_path: Path, *, dpi: int = 150) -> Path:
    _need("pdftoppm")
    path = tmp_path / "document.pdf"
    path.write_bytes(pdf)
    subprocess.run(
        [
            "pdftoppm",
            "-png",
            "-r",
            str(dpi),
            "-f",
            "1",
            "-l",
            "1",
            "-singlefile",
            str(path),
            str(tmp_path / "page"),
        ],
        check=True,
    )
    return tmp_path / "page.png"


LONG_COMPLAINT = (
    "Knocks on rebound over roots and square edges, worse when the trail is cold in the morning. "
    "The fork dives under braking and sits low in its travel on steep descents; it uses all of its "
    "travel on small drops even with two volume spacers added last spring. There is oil on the "
    "stanchions after every ride, more on the left leg, and the wipers look dry and cracked. The "
    "rebound knob clicks but seems to do little beyond the first four clicks. The rider weighs 82 kg "
    "with kit and rides mostly steep, rooty trails, with a bike park week each summer. "
) * 6


@pytest.fixture
def crowded_work_order(db, customer, front_desk, service_types, oil):
    """A job with a very long complaint, ten torque values and six chambers."""
    from shopdesk.customers.models import Unit
    from shopdesk.specs.models import Chamber, TorqueValue, UnitModel
    from shopdesk.workshop.services import work_order_check_in

    model = UnitModel.objects.create(
        maker="Testmaker",
        name="Longtravel 38 Dual Crown",
        year_from=2021,
        kind=UnitModel.Kind.FORK,
        spring_kind=UnitModel.SpringKind.AIR,
        damper_kind=UnitModel.DamperKind.IFP_GAS,
        travel_mm=200,
        stanchion_diameter_mm=38,
        air_piston_diameter_mm=36,
        positive_volume_cc=210,
        negative_volume_cc=120,
        max_pressure_kpa=1200,
    )
    for order, (name, kind, volume) in enumerate(
        [
            ("Damper cartridge", "damper", 128.0),
            ("Lower leg, damper side", "lowers", 20.0),
            ("Lower leg, spring side", "lowers", 21.0),
            ("Air spring lube", "spring", 4.0),
            ("Compression reservoir", "reservoir", 33.0),
            ("Rebound circuit bleed volume", "damper", 7.5),
        ]
    ):
        Chamber.objects.create(
            unit_model=model,
            name=name,
            kind=kind,
            sealed=kind in ("damper", "reservoir"),
            oil=oil,
            volume_ml=volume,
            display_order=order,
        )
    for order, (fastener, torque, critical) in enumerate(
        [
            ("Upper crown pinch bolts", 5.5, True),
            ("Lower crown pinch bolts", 6.5, True),
            ("Steerer clamp bolts", 7.0, True),
            ("Axle pinch bolts", 6.0, True),
            ("Through-axle", 12.0, True),
            ("Damper top cap", 24.0, False),
            ("Air spring top cap", 26.0, False),
            ("Foot nuts", 9.0, False),
            ("Brake mount bolts", 10.5, True),
            ("Rebound knob screw", 1.2, False),
        ]
    ):
        TorqueValue.objects.create(
            unit_model=model,
            fastener=fastener,
            torque_nm=torque,
            safety_critical=critical,
            display_order=order,
        )
    unit = Unit.objects.create(
        customer=customer, unit_model=model, serial_number="LT38-20931-X", model_year=2022, travel_mm=200
    )
    return work_order_check_in(
        unit=unit,
        by=front_desk,
        service_types=service_types,
        complaint=LONG_COMPLAINT,
        came_with="Shock pump, two spare volume spacers, the old wipers in a bag, a note from the rider",
        arrival={
            "positive_pressure_kpa": 620.0,
            "spacer_count": 2,
            "rebound_clicks": 8,
            "compression_clicks": 4,
        },
    )


@pytest.fixture
def ready_work_order(work_order, technician, oil_part):
    """The conftest job with its bench work done (spring before and after, a revalve), ready for pickup."""
    from shopdesk.workshop import services
    from shopdesk.workshop.models import Status
    from shopdesk.workshop.services.revalve import shim_stack_save
    from tests.conftest import finish_bench_work

    services.work_order_move(work_order=work_order, target=Status.ON_THE_BENCH, by=technician)
    services.spring_record_save(
        work_order=work_order,
        stage="before",
        by=technician,
        values={"positive_pressure_kpa": 650.0, "spacer_count": 1},
    )
    stack = {"clamp_mm": 8.0, "preload_n": 0.0}
    shim_stack_save(
        work_order=work_order,
        valve="rebound",
        stage="before",
        by=technician,
        values={**stack, "shims": [{"od": 20.0, "thickness": 0.15, "count": 3}]},
    )
    shim_stack_save(
        work_order=work_order,
        valve="rebound",
        stage="after",
        by=technician,
        values={**stack, "shims": [{"od": 20.0, "thickness": 0.15, "count": 2}]},
    )
    finish_bench_work(work_order, technician, oil_part)
    services.work_order_move(work_order=work_order, target=Status.FINAL_CHECK, by=technician)
    services.work_order_move(work_order=work_order, target=Status.READY_FOR_PICKUP, by=technician)
    return work_order
