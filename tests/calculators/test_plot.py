"""shopdesk.shop.plots.air_spring_plot: valid, CSP-clean SVG that two plots can share a page with."""

from __future__ import annotations

import re
import xml.etree.ElementTree as ET
from concurrent.futures import ThreadPoolExecutor

import numpy as np

from shopdesk.shop.plots import air_spring_plot

SVG = "{http://www.w3.org/2000/svg}"
XLINK_HREF = "{http://www.w3.org/1999/xlink}href"
TRAVEL = np.linspace(0.0, 140.0, 101)
CURVES = [
    ("2 spacers (as set)", TRAVEL, 10.0 * TRAVEL, "main"),
    ("3 spacers", TRAVEL, 12.0 * TRAVEL, "firmer"),
    ("1 spacer", TRAVEL, 8.0 * TRAVEL, "softer"),
]


def _curve_paths(svg: ET.Element) -> list[ET.Element]:
    return [path for path in svg.iter(f"{SVG}path") if path.get("d", "").count("L") >= 100]


def test_it_draws_each_curve_and_labels_the_marked_point() -> None:
    svg = ET.fromstring(air_spring_plot(CURVES, [("Sag 20 %: 275 N", 28.0, 275.0)]))
    assert svg.tag == f"{SVG}svg"
    assert len(_curve_paths(svg)) == 3
    strokes = {path.get("stroke") for path in _curve_paths(svg)}
    assert strokes == {"#1f5f8b", "#a12a1f", "#2d6a3e"}
    texts = {"".join(text.itertext()).strip() for text in svg.iter(f"{SVG}text")}
    assert {"2 spacers (as set)", "3 spacers", "1 spacer", "Sag 20 %: 275 N", "Travel (mm)"} <= texts
    assert svg.find(f"{SVG}title").text == "Spring force against travel"


def test_it_takes_matplotlib_line_properties_as_a_style() -> None:
    svg = ET.fromstring(air_spring_plot([("custom", TRAVEL, TRAVEL, {"color": "#123456", "linewidth": 3})]))
    assert [path.get("stroke") for path in _curve_paths(svg)] == ["#123456"]


def test_it_is_clean_for_a_strict_content_security_policy() -> None:
    text = air_spring_plot(CURVES, [("Sag", 28.0, 275.0)])
    assert text.startswith("<svg")  # no XML prologue or doctype inside a page
    assert "style" not in text and "<script" not in text
    svg = ET.fromstring(text)
    assert svg.get("width") is None and svg.get("viewBox")  # scales with its container


def test_its_ids_carry_the_prefix_and_every_reference_resolves() -> None:
    first, second = (ET.fromstring(air_spring_plot(CURVES, id_prefix=prefix)) for prefix in ("one", "two"))
    ids = {element.get("id") for element in first.iter() if element.get("id")}
    assert ids and all(identifier.startswith("one-") for identifier in ids)
    assert not ids & {element.get("id") for element in second.iter() if element.get("id")}
    for element in first.iter():
        for reference in re.findall(r"url\(#([^)]+)\)", element.get("clip-path", "")):
            assert reference in ids
        if element.get(XLINK_HREF, "").startswith("#"):
            assert element.get(XLINK_HREF)[1:] in ids


def test_it_draws_the_same_plot_from_several_threads_at_once() -> None:
    alone = air_spring_plot(CURVES, [("Sag", 28.0, 275.0)])
    with ThreadPoolExecutor(max_workers=4) as pool:
        together = list(pool.map(lambda _: air_spring_plot(CURVES, [("Sag", 28.0, 275.0)]), range(8)))
    assert all(text == alone for text in together)


def test_it_stays_plain_svg_after_another_library_claims_the_default_prefix() -> None:
    # The PDF writer registers XML prefixes of its own in the process-wide map; a plot drawn
    # after that must still be plain <svg>, not <ns0:svg> (which browsers show as nothing).
    from xml.etree.ElementTree import register_namespace

    from shopdesk.shop.plots import air_spring_plot

    register_namespace("", "adobe:ns:meta/")
    register_namespace("x", "http://www.w3.org/1999/xlink")
    svg = air_spring_plot([("a", [0.0, 1.0], [0.0, 1.0], "main")])
    assert svg.startswith("<svg") and "ns0:" not in svg
