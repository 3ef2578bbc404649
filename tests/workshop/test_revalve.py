"""Revalving on the job: the stack editor, its checks, the library, history and the unit's revalves."""

from __future__ import annotations

import pytest
from django.urls import reverse

from shopdesk.calc import Q_
from shopdesk.calc.shims import Shim, ShimStack, stack_stiffness
from shopdesk.specs.models import StackPreset
from shopdesk.workshop import services
from shopdesk.workshop.models import ShimStackRecord, WorkOrderEvent

VALVE = "rebound"
# A fork cartridge's rebound piston (invented, typical proportions): 18 mm piston on a 10 mm shaft.
BEFORE = [(16, 0.10, 3), (14, 0.10, 1), (12, 0.10, 1), (10, 0.15, 1)]


@pytest.fixture
def on_bench(work_order, technician):
    services.work_order_take(work_order=work_order, by=technician)
    work_order.refresh_from_db()
    return work_order


def _post(lines, *, stage="before", clamp="8", action="save", version=None, **extra):
    prefix = f"stack-{stage}"
    data = {
        "action": action,
        f"{prefix}-rows-TOTAL_FORMS": str(len(lines)),
        f"{prefix}-rows-INITIAL_FORMS": "0",
        f"{prefix}-rows-MIN_NUM_FORMS": "1",
        f"{prefix}-rows-MAX_NUM_FORMS": "40",
        f"{prefix}-clamp_mm": clamp,
        f"{prefix}-piston_diameter_mm": "18",
        f"{prefix}-port_area_mm2": "20",
        f"{prefix}-port_radius_mm": "7",
        f"{prefix}-bleed_mm": "0.8",
    }
    if version is not None:
        data[f"{prefix}-version"] = str(version)
    for index, (od, thickness, count) in enumerate(lines):
        data[f"{prefix}-rows-{index}-od"] = str(od)
        data[f"{prefix}-rows-{index}-thickness"] = str(thickness)
        data[f"{prefix}-rows-{index}-count"] = str(count)
    data.update({f"{prefix}-{name}": value for name, value in extra.items()})
    return data


def _url(work_order, stage="before"):
    return reverse("workshop:stack", args=[work_order.number, VALVE, stage])


def _calc_stack(lines, clamp=8.0):
    return ShimStack(
        [Shim(Q_(od, "mm"), Q_(t, "mm"), n) for od, t, n in lines], clamp_diameter=Q_(clamp, "mm")
    )


def test_a_saved_stack_shows_the_models_stiffness(client, technician, on_bench) -> None:
    client.force_login(technician)
    response = client.post(_url(on_bench), _post(BEFORE), follow=True)
    assert response.status_code == 200
    record = ShimStackRecord.objects.get(work_order=on_bench, valve=VALVE, stage="before")
    assert record.shims[0] == {"od": 16.0, "thickness": 0.1, "count": 3}
    assert record.clamp_mm == 8.0
    # The page shows the library's stiffness for the same stack (shopdesk.calc.shims, checked
    # against Roark and a numerical plate solution in tests/calc/test_shims.py).
    expected = stack_stiffness(_calc_stack(BEFORE)).to("N/mm").magnitude
    assert f"{expected:.0f} N/mm" in response.content.decode()
    assert WorkOrderEvent.objects.filter(work_order=on_bench, message__contains="Shim stack").exists()


def test_before_and_after_give_the_ratio_and_both_plots(client, technician, on_bench) -> None:
    client.force_login(technician)
    client.post(_url(on_bench), _post(BEFORE))
    # The after editor starts from the stack before.
    page = client.get(reverse("workshop:valve", args=[on_bench.number, VALVE])).content.decode()
    assert 'name="stack-after-rows-0-od" value="16.0"' in page
    after = [(16, 0.15, 3), *BEFORE[1:]]  # thicker face shims
    client.post(_url(on_bench, "after"), _post(after, stage="after"))
    response = client.get(reverse("workshop:valve", args=[on_bench.number, VALVE]))
    html = response.content.decode()
    ratio = (
        stack_stiffness(_calc_stack(after)).to("N/mm").magnitude
        / stack_stiffness(_calc_stack(BEFORE)).to("N/mm").magnitude
    )
    assert ratio > 1.2  # three face shims 0.10 → 0.15 mm: t³ grows 3.4 times
    words = (
        f"about {ratio:.1f} times as stiff" if ratio >= 2 else f"about {round((ratio - 1) * 100)} % stiffer"
    )
    assert words in html
    assert 'id="lift-plot"' in html and 'id="force-plot"' in html
    assert html.count("<svg") == 2
    # The job page lists the change in brief.
    job = client.get(on_bench.get_absolute_url()).content.decode()
    assert words in job


@pytest.mark.parametrize(
    ("lines", "clamp", "field", "message"),
    [
        ([(16, 0.8, 1)], "8", "stack-before-rows-0-thickness", "0.05–0.5 mm thick"),
        ([(20, 0.1, 1)], "8", "stack-before-rows-0-od", "Larger than the 18 mm piston"),
        (
            [(16, 0.1, 1), (10, 0.1, 1)],
            "10",
            "stack-before-clamp_mm",
            "smaller than the smallest shim (10 mm)",
        ),
        ([(16, 0.1, 0)], "8", "stack-before-rows-0-count", "greater than or equal to 1"),
        ([("sixteen", 0.1, 1)], "8", "stack-before-rows-0-od", "Enter a number"),
    ],
)
def test_typing_errors_are_refused_at_the_row(
    client, technician, on_bench, lines, clamp, field, message
) -> None:
    client.force_login(technician)
    client.post(_url(on_bench), _post(BEFORE))
    saved = ShimStackRecord.objects.get(work_order=on_bench, stage="before")
    response = client.post(_url(on_bench), _post(lines, clamp=clamp, version=saved.version))
    assert response.status_code == 200
    html = response.content.decode()
    assert message in html
    assert f'name="{field}"' in html and 'aria-invalid="true"' in html
    saved.refresh_from_db()
    assert saved.version == 1 and len(saved.shims) == len(BEFORE)  # nothing saved is lost


def test_rows_are_added_removed_and_moved_without_saving(client, technician, on_bench) -> None:
    client.force_login(technician)
    url = _url(on_bench)
    html = client.post(url, _post(BEFORE, action="add"), HTTP_HX_REQUEST="true").content.decode()
    assert 'name="stack-before-rows-TOTAL_FORMS" value="5"' in html
    html = client.post(url, _post(BEFORE, action="remove-0"), HTTP_HX_REQUEST="true").content.decode()
    assert 'name="stack-before-rows-TOTAL_FORMS" value="3"' in html
    assert 'name="stack-before-rows-0-od" value="14"' in html
    html = client.post(url, _post(BEFORE, action="up-3"), HTTP_HX_REQUEST="true").content.decode()
    assert 'name="stack-before-rows-2-od" value="10"' in html
    assert 'name="stack-before-rows-3-od" value="12"' in html
    assert not ShimStackRecord.objects.exists()


def test_the_library_keeps_a_stack_and_a_job_starts_from_it(client, technician, on_bench) -> None:
    client.force_login(technician)
    data = _post(BEFORE, action="keep")
    data["keep-before-name"] = "Baseline"
    client.post(_url(on_bench), data)
    preset = StackPreset.objects.get(unit_model=on_bench.unit.unit_model, valve=VALVE)
    assert preset.name == "Baseline" and preset.shims[3] == {"od": 10.0, "thickness": 0.15, "count": 1}
    again = client.post(_url(on_bench), data).content.decode()
    assert "already has a stack of that name" in again
    assert StackPreset.objects.count() == 1
    html = client.post(
        _url(on_bench, "after"), {"action": "load", "library-after-preset": preset.pk}, HTTP_HX_REQUEST="true"
    ).content.decode()
    assert 'name="stack-after-rows-3-thickness" value="0.15"' in html
    assert not ShimStackRecord.objects.exists()  # starting from the library saves nothing
    library = client.get(reverse("workshop:stack-library", args=[on_bench.unit.unit_model_id]))
    assert "Baseline" in library.content.decode()


def test_a_second_save_from_an_old_version_is_refused(client, technician, owner, on_bench) -> None:
    client.force_login(technician)
    client.post(_url(on_bench), _post(BEFORE))
    client.post(_url(on_bench), _post(BEFORE[:2], version=1))
    client.force_login(owner)
    response = client.post(_url(on_bench), _post(BEFORE[:1], version=1))
    assert "saved this record while you were editing it" in response.content.decode()
    record = ShimStackRecord.objects.get(stage="before")
    assert record.version == 2 and len(record.shims) == 2
    # History keeps every version of the stack.
    assert [len(h.shims) for h in record.history.order_by("history_date")] == [4, 2]
    assert WorkOrderEvent.objects.filter(message__contains="changed from 3 × 16 × 0.1").exists()


def test_the_front_desk_sees_stacks_but_cannot_change_them(client, technician, front_desk, on_bench) -> None:
    client.force_login(technician)
    client.post(_url(on_bench), _post(BEFORE))
    client.force_login(front_desk)
    page = client.get(reverse("workshop:valve", args=[on_bench.number, VALVE]))
    assert page.status_code == 200 and "3 × 16 × 0.1" in page.content.decode()
    assert "stack-before-rows-0-od" not in page.content.decode()
    assert client.post(_url(on_bench), _post(BEFORE[:1])).status_code == 403


def test_a_voided_stack_leaves_the_editor_empty_and_stays_listed(client, technician, on_bench) -> None:
    client.force_login(technician)
    client.post(_url(on_bench), _post(BEFORE))
    record = ShimStackRecord.objects.get()
    response = client.post(
        reverse("workshop:void", args=[on_bench.number, "stack", record.pk]), {"reason": "wrong valve"}
    )
    assert response.status_code == 302
    assert response.url == reverse("workshop:valve", args=[on_bench.number, VALVE])
    html = client.get(response.url).content.decode()
    assert "1 voided stack record" in html and "wrong valve" in html
    assert client.post(_url(on_bench), _post(BEFORE[:2])).status_code == 302


def test_the_unit_page_lists_every_revalve(client, technician, on_bench) -> None:
    client.force_login(technician)
    client.post(_url(on_bench), _post(BEFORE))
    client.post(_url(on_bench, "after"), _post(BEFORE[:3], stage="after"))
    html = client.get(reverse("customers:unit", args=[on_bench.unit_id])).content.decode()
    assert "Rebound stack on the piston" in html
    assert "3 × 16 × 0.1, 1 × 14 × 0.1, 1 × 12 × 0.1 / clamp 8 mm" in html
    assert "softer" in html  # one shim fewer


def test_the_rebound_cavitation_margin_follows_the_static_pressure(client, technician, on_bench) -> None:
    client.force_login(technician)
    client.post(_url(on_bench), _post(BEFORE, static_pressure_kpa="0.1 bar"))
    low = client.get(reverse("workshop:valve", args=[on_bench.number, VALVE])).content.decode()
    record = ShimStackRecord.objects.get()
    client.post(_url(on_bench), _post(BEFORE, static_pressure_kpa="20 bar", version=record.version))
    high = client.get(reverse("workshop:valve", args=[on_bench.number, VALVE])).content.decode()
    assert "Cavitation likely from about" in low
    assert "No cavitation up to 2.5 m/s" in high


def test_the_job_page_keeps_its_query_count_with_stacks(
    client, technician, on_bench, django_assert_max_num_queries
) -> None:
    client.force_login(technician)
    client.post(_url(on_bench), _post(BEFORE))
    client.post(_url(on_bench, "after"), _post(BEFORE, stage="after"))
    with django_assert_max_num_queries(45):
        assert client.get(on_bench.get_absolute_url()).status_code == 200
    with django_assert_max_num_queries(25):
        assert client.get(reverse("workshop:valve", args=[on_bench.number, VALVE])).status_code == 200


# The editor's buttons and hidden values as posted: refused at the editor, never a 500, nothing
# typed lost, nothing saved.


@pytest.mark.parametrize(
    "action", ["remove-²", "up-٣", "down-99", "remove-1x", "sideways-1", "save\x00", "x" * 30]
)
def test_a_button_that_is_not_on_the_page_is_refused_above_the_rows(
    client, technician, on_bench, action
) -> None:
    # "remove-²" was a 500 ("²".isdigit() is true, int("²") raises); "sideways-1" saved the stack.
    client.force_login(technician)
    response = client.post(_url(on_bench), _post(BEFORE, action=action))
    assert response.status_code == 200
    html = response.content.decode()
    assert "That button is not on this page" in html or "That row is no longer in the stack" in html
    assert 'name="stack-before-rows-3-od" value="10"' in html  # the rows as typed
    assert not ShimStackRecord.objects.exists()


def test_moving_a_row_that_is_not_there_says_so_and_moves_nothing(client, technician, on_bench) -> None:
    client.force_login(technician)
    html = client.post(_url(on_bench), _post(BEFORE, action="remove-7")).content.decode()
    assert "That row is no longer in the stack: nothing moved." in html
    assert 'name="stack-before-rows-TOTAL_FORMS" value="4"' in html


@pytest.mark.parametrize("total", ["٤", "+4", "4 ", "", "999"])
def test_a_damaged_row_count_keeps_the_rows_posted_and_says_so(client, technician, on_bench, total) -> None:
    # int() read "٤" and "+4"; "999" was cut to the most rows quietly, "" lost every row.
    client.force_login(technician)
    data = _post(BEFORE, action="add") | {"stack-before-rows-TOTAL_FORMS": total}
    html = client.post(_url(on_bench), data).content.decode()
    assert "The rows came back damaged" in html
    assert 'name="stack-before-rows-3-thickness" value="0.15"' in html
    assert 'name="stack-before-rows-4-od"' in html  # and the row asked for was added


def test_load_without_a_pick_is_refused_at_the_pick_and_keeps_the_rows(client, technician, on_bench) -> None:
    client.force_login(technician)
    for picked in ("", "١", "9" * 30):
        data = _post(BEFORE, action="load") | {"library-before-preset": picked}
        response = client.post(_url(on_bench), data)
        assert response.status_code == 200
        html = response.content.decode()
        assert 'class="errorlist' in html and "library-before-preset" in html, picked
        assert 'name="stack-before-rows-3-od" value="10"' in html, picked  # nothing typed lost


def test_load_carries_only_a_real_version_on(client, technician, on_bench) -> None:
    client.force_login(technician)
    data = _post(BEFORE, action="keep") | {"keep-before-name": "Baseline"}
    client.post(_url(on_bench), data)
    preset = StackPreset.objects.get()
    html = client.post(
        _url(on_bench), {"action": "load", "library-before-preset": preset.pk, "stack-before-version": "٣"}
    ).content.decode()
    assert "reload the job page and enter the values again" in html
    assert 'name="stack-before-version" value="٣"' not in html


@pytest.mark.parametrize("name", ["", "   ", "n" * 81])
def test_keeping_a_stack_under_a_bad_name_is_refused_at_the_name(client, technician, on_bench, name) -> None:
    # The name skipped its form: 81 characters were cut to 80 quietly.
    client.force_login(technician)
    data = _post(BEFORE, action="keep") | {"keep-before-name": name}
    response = client.post(_url(on_bench), data)
    assert response.status_code == 200
    assert response.context["panel"].keep["before"].has_error("name")
    assert not StackPreset.objects.exists()


@pytest.mark.parametrize("total", ["٤", "+4", "", "4.0"])
def test_saving_with_a_damaged_row_count_is_refused_above_the_rows(
    client, technician, on_bench, total
) -> None:
    # Django's formset read its counts with IntegerField: "٤" and "+4" were taken as 4.
    client.force_login(technician)
    data = _post(BEFORE) | {"stack-before-rows-TOTAL_FORMS": total}
    response = client.post(_url(on_bench), data)
    assert response.status_code == 200
    assert "The rows came back damaged" in response.content.decode()
    assert not ShimStackRecord.objects.exists()
