"""The calculator page: each section's answer, its errors at the field, htmx partials, access.

Check values come from the reference list (REFERENCES.md) (named beside each) or, where no published
value exists, from the calculation library called directly with the same inputs.
"""

from __future__ import annotations

import html
import math
import re
import xml.etree.ElementTree as ET

import pytest
from django.urls import reverse

from shopdesk.calc import Q_
from shopdesk.calc import damper as damper_calc
from shopdesk.calc import oil as oil_calc
from shopdesk.calc.air_spring import AirSpring, fork_load
from shopdesk.shop.quantities import PRESSURE, format_quantity

URL = "/calc/"
HTMX = {"HX-Request": "true"}
SVG = "{http://www.w3.org/2000/svg}"


def query(section: str, **values: str) -> dict[str, str]:
    return {"section": section, **{f"{section}-{name}": value for name, value in values.items()}}


def page(client, section: str, htmx: bool = False, **values: str) -> str:
    response = client.get(URL, query(section, **values), headers=HTMX if htmx else {})
    assert response.status_code == 200
    return response.content.decode()


def reading(body: str, label: str) -> str:
    """The value shown for the reading whose label starts with ``label``."""
    match = re.search(
        rf"<dt>{re.escape(label)}[^<]*</dt>\s*<dd><span class=\"value\">([^<]*)</span>"
        r"(?: <span class=\"detail\">([^<]*))?",
        body,
    )
    assert match, f"no reading {label!r} in the result"
    return html.unescape(match.group(1) + (" | " + match.group(2) if match.group(2) else ""))


def number(text: str) -> float:
    return float(re.search(r"-?\d+(?:\.\d+)?", text).group())


def field_errors(body: str, section: str, field: str) -> str:
    match = re.search(rf'<div id="id_{section}-{field}-errors"[^>]*>(.*?)</div>', body, re.S)
    assert match, f"no error slot for {section}-{field}"
    return match.group(1)


@pytest.fixture
def bench(client, technician):
    client.force_login(technician)
    return client


# --- Access -------------------------------------------------------------------------------------


def test_it_is_at_calc_with_its_url_name() -> None:
    assert reverse("calculators:index") == URL


def test_it_lets_technicians_and_owners_in(client, technician, owner) -> None:
    for user in (technician, owner):
        client.force_login(user)
        assert client.get(URL).status_code == 200, user.username


def test_it_refuses_the_front_desk(client, front_desk) -> None:
    client.force_login(front_desk)
    assert client.get(URL).status_code == 403


def test_it_sends_anonymous_visitors_to_sign_in(client, db) -> None:
    response = client.get(URL)
    assert response.status_code == 302
    assert response["Location"].startswith(reverse("accounts:sign-in"))


def test_it_refuses_post(bench) -> None:
    assert bench.post(URL, {}).status_code == 405


def test_it_renders_in_a_fixed_number_of_queries(
    bench, oil, air_fork_model, django_assert_max_num_queries
) -> None:
    # session, user, user permissions, group permissions (the permission check), oils, air-spring
    # unit models (each loaded once for every select on the page), and the session's idle-timeout
    # refresh (savepoint, update, release) = 9
    with django_assert_max_num_queries(9):
        response = bench.get(URL, {"model": air_fork_model.pk})
    assert response.status_code == 200


def test_every_section_is_a_plain_get_form_with_a_submit_button(bench) -> None:
    body = bench.get(URL).content.decode()
    for section in ("weigh", "level", "viscosity", "blend", "air", "gas", "cavitation", "friction"):
        form = re.search(rf'<form id="{section}-form"[^>]*>', body).group()
        assert 'method="get"' in form and f'hx-target="#{section}-result"' in form
        assert 'hx-trigger="input changed delay:300ms, change"' in form
    assert body.count('<button type="submit">Calculate</button>') == 8
    assert "<script>" not in body and " onclick=" not in body and " oninput=" not in body


# --- 1. Oil fill ---------------------------------------------------------------------------------


def test_weigh_gives_grams_for_a_volume_at_temperature(bench) -> None:
    body = page(bench, "weigh", density="870 kg/m³", temperature="40 °C", volume="100 mL")
    # API MPMS 11.1 / ASTM D1250 (REFERENCES.md): 870 kg/m³ at 15 °C is 854.22 kg/m³ at 40 °C,
    # so 100 mL weighs 85.42 g.
    assert reading(body, "Density at 40 °C").startswith("854.2 kg/m³")
    assert reading(body, "Weigh for 100 mL") == "85.4 g"


def test_weigh_gives_the_volume_of_a_weighed_drain(bench) -> None:
    body = page(bench, "weigh", density="0.87 g/mL", temperature="104 °F", mass="85.422 g")
    # The same check read backwards: 85.422 g at 854.22 kg/m³ (40 °C = 104 °F) is 100.0 mL.
    assert reading(body, "85.4 g on the scale is") == "100 mL"


def test_weigh_takes_the_density_of_an_oil_from_the_list(bench, oil) -> None:
    body = page(bench, "weigh", oil=str(oil.pk), temperature="20", volume="95")
    grams = oil_calc.mass_for_volume(
        volume=Q_(95, "mL"), rho15=Q_(865.0, "kg/m**3"), temperature=Q_(20, "degC")
    )
    assert reading(body, "Weigh for 95 mL") == f"{grams.to('g').magnitude:.1f} g"
    assert "Test 5 wt, 865 kg/m³ at 15 °C" in body


def test_level_turns_a_level_change_into_a_volume_and_back(bench) -> None:
    # (π/4)·d²·s: 10 mm over 100 mm is 7.854 mL (REFERENCES.md, displacement).
    body = page(bench, "level", bore_diameter="10 mm", level_change="100 mm", volume="7.854 mL")
    assert reading(body, "100 mm of level is") == "7.9 mL"
    assert reading(body, "7.9 mL changes the level by") == "100 mm"


def test_level_takes_off_the_rod_standing_in_the_oil(bench) -> None:
    body = page(bench, "level", bore_diameter="35", rod_diameter="20", level_change="10")
    expected = oil_calc.level_volume(
        bore_diameter=Q_(35, "mm"), rod_diameter=Q_(20, "mm"), level_change=Q_(10, "mm")
    )
    # Independently: π/4 × (35² − 20²) × 10 mm³ = 6.48 mL.
    assert math.isclose(expected.to("mL").magnitude, math.pi / 4 * (35**2 - 20**2) * 10 / 1000)
    assert reading(body, "10 mm of level is") == f"{expected.to('mL').magnitude:.1f} mL"


def test_level_puts_the_librarys_error_at_the_rod(bench) -> None:
    body = page(bench, "level", bore_diameter="20", rod_diameter="25", level_change="10")
    expected = "rod_diameter must be smaller than bore_diameter (20 mm), got 25 mm."
    assert expected in field_errors(body, "level", "rod_diameter")


def test_weigh_says_what_is_missing_instead_of_shouting(bench) -> None:
    body = page(bench, "weigh", temperature="20")
    assert "To calculate, type an oil or its density, a volume to fill or the grams on the scale." in body
    assert "This field is required" not in body


# --- 2. Viscosity ---------------------------------------------------------------------------------


def test_viscosity_at_temperature_matches_astm_d341(bench) -> None:
    # ASTM D341 (REFERENCES.md): 32.0 / 5.4 mm²/s has 86.28 mm²/s at 20 °C and 336.0 at 0 °C (±0.1 %).
    body = page(bench, "viscosity", nu40="32", nu100="5.4 cSt", temperature="20 °C")
    assert reading(body, "At 20 °C").startswith("86.28 mm²/s")
    body = page(bench, "viscosity", nu40="32", nu100="5.4", temperature="32 °F")
    assert number(reading(body, "At 0 °C")) == pytest.approx(336.0, rel=1e-3)
    # ISO 3448: VG32 is 28.8–35.2 mm²/s at 40 °C.
    assert reading(body, "ISO 3448 grade").startswith("ISO VG 32")


def test_viscosity_of_an_oil_from_the_list(bench, oil) -> None:
    body = page(bench, "viscosity", oil=str(oil.pk), temperature="0")
    expected = oil_calc.viscosity_at(
        nu40=Q_(16.0, "mm**2/s"), nu100=Q_(4.2, "mm**2/s"), temperature=Q_(0, "degC")
    )
    assert number(reading(body, "At 0 °C")) == pytest.approx(expected.magnitude, abs=0.005)
    assert reading(body, "ISO 3448 grade").startswith("ISO VG 15")  # ISO 3448: VG15 is 13.5–16.5


def test_viscosity_between_grades_has_none(bench) -> None:
    body = page(bench, "viscosity", nu40="26", nu100="5", temperature="40")
    assert reading(body, "ISO 3448 grade").startswith("none")  # 26 lies between VG22 (≤24.2) and VG32 (≥28.8)


def test_viscosity_puts_the_librarys_error_at_the_field(bench) -> None:
    body = page(bench, "viscosity", nu40="5", nu100="16", temperature="20")
    assert "nu100 must be less than nu40" in field_errors(body, "viscosity", "nu100")


# --- 3. Blend ------------------------------------------------------------------------------------


def test_blend_gives_the_refutas_share_and_grams(bench) -> None:
    # Refutas (Maples 2000, REFERENCES.md): 60 % of a 5 mm²/s oil with 40 % of a 20 mm²/s oil
    # gives 8.109 mm²/s; so that target asks for 60 % of oil A.
    body = page(bench, "blend", nu_a="5", nu_b="20", target="8.109", total_mass="500 g")
    assert reading(body, "Oil A") == "60 % by mass · 300 g"
    assert reading(body, "Oil B") == "40 % by mass · 200 g"
    assert reading(body, "Check: the blend").startswith("8.11 mm²/s")


def test_blend_takes_oils_from_the_list_at_the_temperature(bench, oil) -> None:
    body = page(bench, "blend", oil_a=str(oil.pk), nu_b="46", target="30", temperature="40")
    share = oil_calc.blend_fraction(
        nu_a=Q_(16.0, "mm**2/s"), nu_b=Q_(46, "mm**2/s"), nu_target=Q_(30, "mm**2/s")
    )
    assert reading(body, "Oil A") == f"{share * 100:.1f} % by mass"


def test_blend_puts_an_oils_temperature_out_of_range_at_the_temperature(bench, oil) -> None:
    body = page(bench, "blend", oil_a=str(oil.pk), nu_b="46", target="30", temperature="200 °C")
    assert "temperature must be at most 150 degC" in field_errors(body, "blend", "temperature")


def test_blend_refuses_a_target_outside_the_two_oils_at_the_target(bench) -> None:
    body = page(bench, "blend", nu_a="5", nu_b="20", target="30")
    assert "nu_target must lie between the two oils, 5 to 20 mm²/s" in field_errors(body, "blend", "target")


# --- 4. Air spring -------------------------------------------------------------------------------

AIR = {
    "piston_diameter": "32 mm",
    "travel": "140",
    "positive_volume": "200 cc",
    "negative_volume": "90",
    "spacer_volume": "10",
    "spacer_count": "2",
    "rider_mass": "80 kg",
    "share": "35 %",
    "sag": "20",
}


def test_air_spring_pressure_for_sag_in_the_shops_unit(bench) -> None:
    body = page(bench, "air", **AIR)
    spring = AirSpring(
        piston_diameter=Q_(32, "mm"),
        travel=Q_(140, "mm"),
        positive_volume=Q_(200, "cc"),
        negative_volume=Q_(90, "cc"),
        spacer_volume=Q_(20, "cc"),
    )
    pressure = spring.pressure_for_sag(load=fork_load(rider_mass=Q_(80, "kg"), share=0.35), sag=0.2)
    assert reading(body, "Set pressure").startswith(
        f"{format_quantity(pressure.to('kPa').magnitude, PRESSURE)} gauge"
    )
    assert reading(body, "Set pressure").startswith("129.6 psi gauge")  # the shop's unit is psi in tests
    # 80 kg × 9.80665 m/s² (CGPM standard gravity, exact) × 0.35 = 274.6 N; 20 % of 140 mm is 28 mm.
    assert reading(body, "Load on the unit").startswith("275 N")
    assert reading(body, "Sag") == "28 mm of 140 mm"


@pytest.mark.parametrize("unit, shown", [("bar", "8.94 bar gauge"), ("psi", "129.6 psi gauge")])
def test_air_spring_follows_the_shops_pressure_unit(bench, settings, unit, shown) -> None:
    settings.SHOP_PRESSURE_UNIT = unit
    assert reading(page(bench, "air", **AIR), "Set pressure").startswith(shown)


def test_air_spring_plot_is_svg_with_three_curves_and_the_sag_point(bench) -> None:
    body = page(bench, "air", **AIR)
    svg_text = re.search(r"<svg.*?</svg>", body, re.S).group()
    svg = ET.fromstring(svg_text)
    assert svg.tag == f"{SVG}svg" and svg.get("role") == "img"
    # A curve is a path of 101 points; the legend's sample lines are two points each.
    curves = [path for path in svg.iter(f"{SVG}path") if path.get("d", "").count("L") >= 100]
    assert len(curves) == 3
    texts = {"".join(text.itertext()).strip() for text in svg.iter(f"{SVG}text")}
    assert {"2 spacers (as set)", "1 spacer", "3 spacers"} <= texts
    assert "Sag 20 %: 275 N" in texts
    # Inline under a strict CSP: no style element or attribute, no script.
    assert "style" not in svg_text and "<script" not in svg_text


def test_air_spring_warns_above_the_models_maximum_pressure(bench, air_fork_model) -> None:
    values = {
        **AIR,
        "piston_diameter": "32",
        "positive_volume": "120",
        "spacer_count": "0",
        "rider_mass": "180",
    }
    body = page(bench, "air", unit_model=str(air_fork_model.pk), **values)
    assert reading(body, "Set pressure")  # the result is still shown
    maximum = format_quantity(air_fork_model.max_pressure_kpa, PRESSURE)  # 1100 kPa is 159.5 psi
    assert f"is above the maximum of {maximum} for the {air_fork_model.name}: more volume spacers" in body
    assert 'class="calc-warning" role="alert"' in body


def test_air_spring_says_why_a_spacer_more_has_no_curve(bench, air_fork_model) -> None:
    # The fixture's 120 cc positive chamber less one 10 cc spacer is less than piston area × travel,
    # 112.6 cc.
    values = {**AIR, "positive_volume": "120", "spacer_count": "0"}
    body = page(bench, "air", unit_model=str(air_fork_model.pk), **values)
    assert "No curve for 1 spacer: The positive chamber would be swept to nothing" in body
    assert reading(body, "Set pressure")


def test_air_spring_refuses_more_spacers_than_the_model_takes(bench, air_fork_model) -> None:
    too_many = str(air_fork_model.max_spacers + 1)
    body = page(bench, "air", unit_model=str(air_fork_model.pk), **{**AIR, "spacer_count": too_many})
    expected = f"takes at most {air_fork_model.max_spacers} volume spacers"
    assert expected in field_errors(body, "air", "spacer_count")


def test_choosing_a_unit_model_fills_the_geometry_and_the_cautions(bench, air_fork_model) -> None:
    body = bench.get(URL, {"model": air_fork_model.pk}).content.decode()
    model = air_fork_model
    for field, value in {
        "piston_diameter": f"{model.air_piston_diameter_mm:g} mm",
        "travel": f"{model.travel_mm:g} mm",
        "positive_volume": f"{model.positive_volume_cc:g} mL",
        "negative_volume": f"{model.negative_volume_cc:g} mL",
        "spacer_volume": f"{model.spacer_volume_cc:g} mL",
    }.items():
        assert re.search(rf'name="air-{field}" value="{value}"', body), field
    assert f'name="air-unit_model" value="{air_fork_model.pk}"' in body
    maximum = format_quantity(model.max_pressure_kpa, PRESSURE)
    assert f"Never exceed the maximum pressure of {maximum} on the spec sheet." in body
    assert f'<option value="{air_fork_model.pk}" selected>' in body


def test_the_model_select_re_renders_the_air_section_keeping_the_riders_values(bench, air_fork_model) -> None:
    values = query("air", **{**AIR, "piston_diameter": "50", "spacer_count": "0"})
    response = bench.get(URL, {**values, "model": air_fork_model.pk}, headers=HTMX)
    body = response.content.decode()
    assert "<html" not in body
    assert body.lstrip().startswith('<section class="card calc" id="calc-air"')
    model_diameter = f"{air_fork_model.air_piston_diameter_mm:g} mm"
    assert f'name="air-piston_diameter" value="{model_diameter}"' in body  # the model's, over the typed 50
    assert 'name="air-rider_mass" value="80 kg"' in body  # the rider's, kept
    assert reading(body, "Set pressure")


def test_without_a_model_the_general_caution_shows(bench) -> None:
    body = bench.get(URL).content.decode()
    assert "Release all air from every chamber before opening an air spring." in body
    assert "Never exceed the unit's maximum pressure from the maker's service data." in body


def test_air_spring_library_error_lands_at_the_field(bench) -> None:
    body = page(bench, "air", **{**AIR, "positive_volume": "100"})  # less than 112.6 cc swept
    assert "The positive chamber would be swept to nothing" in field_errors(body, "air", "positive_volume")


# --- 5. Sealed cavity and cavitation -------------------------------------------------------------


def test_trapped_gas_pressure_gauge_and_absolute(bench) -> None:
    # Polytropic law (REFERENCES.md): 20 mL at 101.325 kPa abs compressed by 7.854 mL reaches
    # 166.85 kPa abs (n = 1). 0 gauge is 101.325 kPa absolute.
    body = page(
        bench, "gas", gas_volume="20 mL", initial_pressure="0", volume_change="7.854 mL", compression="1.0"
    )
    shown = reading(body, "Pressure after")
    assert shown.startswith("9.5 psi gauge")  # 166.85 − 101.325 = 65.52 kPa = 9.50 psi
    assert number(re.search(r"([\d.]+) kPa absolute", shown).group(1)) == pytest.approx(166.85, abs=0.06)


def test_trapped_gas_from_shaft_and_stroke_fast(bench) -> None:
    # 10 mm shaft × 100 mm is 7.854 mL; n = 1.4 gives 203.68 kPa abs (REFERENCES.md).
    body = page(
        bench,
        "gas",
        gas_volume="20",
        initial_pressure="0 bar",
        shaft_diameter="10",
        stroke="100",
        compression="1.4",
    )
    assert reading(body, "Shaft displacement").startswith("7.9 mL")
    absolute = re.search(r"([\d.]+) kPa absolute", reading(body, "Pressure after")).group(1)
    assert float(absolute) == pytest.approx(203.68, abs=0.06)


def test_trapped_gas_says_hydraulic_lock_clearly(bench) -> None:
    body = page(bench, "gas", gas_volume="20", initial_pressure="0", volume_change="25")
    assert '<div class="calc-alarm" role="alert"><strong>Hydraulic lock.</strong>' in body
    assert "Hydraulic lock: volume_change 25 mL fills the whole 20 mL gas pocket" in field_errors(
        body, "gas", "volume_change"
    )


def test_trapped_gas_refuses_both_ways_of_giving_the_change(bench) -> None:
    body = page(
        bench,
        "gas",
        gas_volume="20",
        initial_pressure="0",
        volume_change="5",
        shaft_diameter="10",
        stroke="20",
    )
    nonfield = re.search(r'<div id="gas-nonfield"[^>]*>(.*?)</div>', body, re.S).group(1)
    assert "Give a volume change, or a shaft diameter and a stroke: not both." in nonfield


def test_cavitation_margin_and_largest_force(bench) -> None:
    body = page(
        bench,
        "cavitation",
        static_pressure="0",
        damping_force="50 N",
        piston_diameter="20",
        threshold="30 kPa",
    )
    area = Q_(math.pi / 4 * 20**2, "mm**2")  # π/4 × (20 mm)² = 314.16 mm²
    static = Q_(101.325, "kPa")  # 0 gauge, absolute
    largest = damper_calc.max_force_before_cavitation(
        static_pressure=static, piston_area=area, threshold=Q_(30, "kPa")
    )
    # (101.325 − 30) kPa × 314.16 mm² = 22.41 N
    assert largest.magnitude == pytest.approx(22.41, abs=0.01)
    assert reading(body, "Largest damping force").startswith("22 N")
    assert reading(body, "Piston area").startswith("314.2 mm²")
    margin = damper_calc.cavitation_margin(
        static_pressure=static, damping_force=Q_(50, "N"), piston_area=area, threshold=Q_(30, "kPa")
    )
    assert f"{margin.low_side_pressure.magnitude:.1f} kPa absolute" in reading(body, "Low-side pressure")
    assert "the oil will release air or cavitate" in body


def test_cavitation_uses_the_annulus_beside_the_shaft(bench) -> None:
    body = page(
        bench,
        "cavitation",
        static_pressure="10 bar",
        damping_force="200",
        piston_diameter="20",
        shaft_diameter="8",
        threshold="30 kPa",
    )
    assert reading(body, "Piston area").startswith(f"{math.pi / 4 * (20**2 - 8**2):.1f} mm²")  # 263.9 mm²
    # 10 bar gauge is 1101.3 kPa absolute: (1101.3 − 30) kPa × 263.9 mm² = 282.7 N before the threshold,
    # and 200 N leaves the low side at 1101.3 − 757.9 = 343.4 kPa absolute.
    assert reading(body, "Largest damping force").startswith("283 N")
    assert reading(body, "Low-side pressure").endswith("343.4 kPa absolute")
    assert "will release air or cavitate" not in body


# --- 6. IFP friction -----------------------------------------------------------------------------


def test_ifp_friction_reaches_the_shaft_by_the_area_ratio(bench) -> None:
    body = page(bench, "friction", ifp_friction="30 N", shaft_diameter="10", ifp_diameter="20")
    expected = damper_calc.friction_at_shaft(
        ifp_friction=Q_(30, "N"), shaft_diameter=Q_(10, "mm"), ifp_diameter=Q_(20, "mm")
    )
    assert expected.magnitude == pytest.approx(7.5)  # 30 N × (10/20)²
    assert (
        reading(body, "Friction felt at the shaft")
        == "7.5 N | 25 % of the IFP's friction, scaled by shaft area / IFP area"
    )


def test_ifp_friction_puts_the_shaft_inside_the_ifp(bench) -> None:
    body = page(bench, "friction", ifp_friction="30", shaft_diameter="25", ifp_diameter="20")
    assert "shaft_diameter must be smaller than ifp_diameter (20 mm)" in field_errors(
        body, "friction", "shaft_diameter"
    )


# --- Bad input, every section: 200 with the message at the field ----------------------------------

BAD = [
    ("weigh", {"density": "870", "temperature": "20", "volume": "-5 mL"}, "volume", "Must be at least 0 mL."),
    (
        "weigh",
        {"density": "870", "temperature": "hot", "volume": "5"},
        "temperature",
        "“hot” does not start with a number.",
    ),
    (
        "level",
        {"bore_diameter": "nan", "level_change": "10"},
        "bore_diameter",
        "“nan” does not start with a number.",
    ),
    (
        "viscosity",
        {"nu40": "abc", "nu100": "5", "temperature": "20"},
        "nu40",
        "“abc” does not start with a number.",
    ),
    (
        "viscosity",
        {"nu40": "32 psi", "nu100": "5", "temperature": "20"},
        "nu40",
        "is not a kinematic viscosity",
    ),
    (
        "blend",
        {"nu_a": "5", "nu_b": "20", "target": "-3"},
        "target",
        "nu_target must be at least 0.21 mm**2/s",
    ),
    (
        "air",
        {**AIR, "rider_mass": "85 psi"},
        "rider_mass",
        "“85 psi” is not a mass: use a unit such as g or kg.",
    ),
    ("air", {**AIR, "share": "abc"}, "share", "“abc” is not a percentage"),
    ("air", {**AIR, "sag": "120"}, "sag", "Must be more than 0 % and less than 100 %"),
    ("air", {**AIR, "travel": "-140"}, "travel", "Must be at least 0 mm."),
    (
        "gas",
        {"gas_volume": "20", "initial_pressure": "85 kg", "volume_change": "5"},
        "initial_pressure",
        "“85 kg” is not a pressure: use a unit such as psi, bar or kPa.",
    ),
    (
        "gas",
        {"gas_volume": "inf", "initial_pressure": "0", "volume_change": "5"},
        "gas_volume",
        "does not start with a number",
    ),
    (
        "cavitation",
        {"static_pressure": "85 kg", "damping_force": "50", "piston_diameter": "20", "threshold": "30 kPa"},
        "static_pressure",
        "is not a pressure",
    ),
    (
        "cavitation",
        {"static_pressure": "0", "damping_force": "50 kg", "piston_diameter": "20", "threshold": "30 kPa"},
        "damping_force",
        "“50 kg” is not a force",
    ),
    (
        "friction",
        {"ifp_friction": "-30", "shaft_diameter": "10", "ifp_diameter": "20"},
        "ifp_friction",
        "Must be at least 0 N.",
    ),
    (
        "friction",
        {"ifp_friction": "30", "shaft_diameter": "NaN", "ifp_diameter": "20"},
        "shaft_diameter",
        "does not start with a number",
    ),
]


@pytest.mark.parametrize("section, values, field, message", BAD, ids=[f"{s}-{f}" for s, _, f, _ in BAD])
def test_bad_input_shows_at_the_field(bench, section, values, field, message) -> None:
    for htmx in (False, True):
        body = page(bench, section, htmx=htmx, **values)
        assert message in field_errors(body, section, field), (htmx, body[:2000])


# --- htmx and plain HTML -------------------------------------------------------------------------


def test_htmx_gets_only_the_sections_result_with_errors_out_of_band(bench) -> None:
    body = page(bench, "weigh", htmx=True, density="870", temperature="20", volume="85 kg")
    assert "<html" not in body and "<form" not in body
    assert body.lstrip().startswith('<div id="weigh-result"')
    assert '<div id="id_weigh-volume-errors" class="field-errors" hx-swap-oob="true">' in body
    assert "is not a volume" in field_errors(body, "weigh", "volume")
    assert 'id="level-result"' not in body


def test_htmx_air_result_carries_its_plot(bench) -> None:
    body = page(bench, "air", htmx=True, **AIR)
    assert body.lstrip().startswith('<div id="air-result"')
    assert "<svg" in body and "<html" not in body


def test_without_script_the_form_reloads_the_page_with_the_result(bench) -> None:
    body = page(bench, "friction", ifp_friction="30", shaft_diameter="10", ifp_diameter="20")
    assert "<html" in body
    assert 'name="friction-ifp_friction" value="30"' in body  # the typed value stays in its box
    assert reading(body, "Friction felt at the shaft").startswith("7.5 N")
    assert 'name="weigh-temperature" value="20 °C"' in body  # other sections show their defaults
