"""The bench's records: oil per chamber, spring, parts, labour, checks, voiding and conflicts."""

from __future__ import annotations

import datetime
from decimal import Decimal

import pytest
from django.urls import reverse
from django.utils import timezone

from shopdesk.stock.selectors import on_hand
from shopdesk.workshop import services
from shopdesk.workshop.models import OilRecord, ServiceRecord, Status, WorkOrderEvent
from tests.conftest import finish_bench_work


@pytest.fixture
def on_bench(work_order, technician):
    services.work_order_take(work_order=work_order, by=technician)
    work_order.refresh_from_db()
    return work_order


def _chamber(work_order, kind):
    return work_order.unit.unit_model.chambers.get(kind=kind)


def test_it_converts_drained_grams_with_the_oils_density(client, technician, on_bench, oil_part) -> None:
    chamber = _chamber(on_bench, "damper")
    client.force_login(technician)
    prefix = f"oil-{chamber.pk}"
    response = client.post(
        reverse("workshop:oil", kwargs={"number": on_bench.number, "chamber_id": chamber.pk}),
        {
            f"{prefix}-drained": "88 g",
            f"{prefix}-condition": "dark",
            f"{prefix}-filled_ml": "95",
            f"{prefix}-oil_part": oil_part.pk,
        },
    )
    assert response.status_code == 302
    record = OilRecord.objects.get()
    # API MPMS 11.1 lubricating oil: rho15 = 865 kg/m3 -> 861.5 kg/m3 at the shop's 20 C;
    # 88 g / 0.8615 g/mL = 102.1 mL (density model checked in tests/calc/test_oil.py)
    assert record.drained_weighed_g == 88
    assert record.drained_ml == pytest.approx(102.15, abs=0.1)
    # 95 mL drawn from stock of 2000 mL
    assert on_hand(oil_part) == Decimal("1905")


def test_it_says_what_more_than_spec_from_a_sealed_cartridge_suggests(
    client, technician, on_bench, oil_part
) -> None:
    chamber = _chamber(on_bench, "damper")  # sealed, spec 95 mL
    services.oil_record_save(
        work_order=on_bench,
        chamber=chamber,
        by=technician,
        values={"drained_ml": 118.0, "filled_ml": 95.0, "oil_part": oil_part},
    )
    client.force_login(technician)
    body = client.get(on_bench.get_absolute_url()).content.decode()
    # 118 against 95 is +24 %, over the shop's 10 % threshold (common practice)
    assert "+24 %" in body and "migrated past the shaft seal" in body and "more than 10 % over" in body


def test_it_says_what_less_than_spec_from_a_lower_leg_suggests(on_bench, technician, oil_part) -> None:
    from shopdesk.workshop.diagnosis import drained_findings

    chamber = _chamber(on_bench, "lowers")  # spec 15 mL
    findings = drained_findings(chamber=chamber, drained_ml=6.0, condition="milky_water")
    assert (
        findings[0].level == "warn"
        and "wiper" in findings[0].message
        and "(-60 %)" in findings[0].message
        and "more than 30 % under" in findings[0].message
    )
    assert "water" in findings[1].message
    assert drained_findings(chamber=chamber, drained_ml=14.0)[0].level == "ok"


def test_a_finding_gives_the_volumes_in_the_shops_unit_as_measured(on_bench, settings) -> None:
    from shopdesk.workshop.diagnosis import drained_findings

    chamber = _chamber(on_bench, "lowers")  # spec 15 mL
    [finding] = drained_findings(chamber=chamber, drained_ml=12.5)
    # 12.5 against 15 is -16.7 %: the half millilitre is shown, not rounded away
    assert finding.message.startswith("12.5 mL out against 15 mL in the spec (-17 %)")
    settings.SHOP_VOLUME_UNIT = "fl oz"
    [finding] = drained_findings(chamber=chamber, drained_ml=12.5)
    # 1 US fl oz = 29.5735 mL (NIST Handbook 44): 12.5 mL = 0.42 fl oz, 15 mL = 0.51 fl oz
    assert finding.message.startswith("0.42 fl oz out against 0.51 fl oz in the spec (-17 %)")


def test_it_asks_to_confirm_a_fill_outside_the_tolerance(client, technician, on_bench, oil_part) -> None:
    chamber = _chamber(on_bench, "damper")
    url = reverse("workshop:oil", kwargs={"number": on_bench.number, "chamber_id": chamber.pk})
    prefix = f"oil-{chamber.pk}"
    data = {f"{prefix}-drained": "95", f"{prefix}-filled_ml": "110 mL", f"{prefix}-oil_part": oil_part.pk}
    client.force_login(technician)
    response = client.post(url, data)
    assert "Tick the box below to confirm" in response.content.decode()
    assert not OilRecord.objects.exists()
    assert on_hand(oil_part) == Decimal("2000")
    response = client.post(url, {**data, f"{prefix}-fill_confirmed": "on"})
    assert response.status_code == 302
    assert OilRecord.objects.get().filled_ml == 110


@pytest.mark.parametrize(
    ("drained", "words"),
    [
        ("-5", "between 0 and 1000"),
        ("85 psi", "Type a volume"),
        ("5000 g", "between 0 and 1000 g"),
        ("lots", "number"),
    ],
)
def test_it_refuses_bad_oil_input_at_the_field(
    client, technician, on_bench, oil_part, drained, words
) -> None:
    chamber = _chamber(on_bench, "damper")
    prefix = f"oil-{chamber.pk}"
    client.force_login(technician)
    response = client.post(
        reverse("workshop:oil", kwargs={"number": on_bench.number, "chamber_id": chamber.pk}),
        {f"{prefix}-drained": drained, f"{prefix}-filled_ml": "95", f"{prefix}-oil_part": oil_part.pk},
    )
    assert response.status_code == 200
    assert words in response.content.decode()
    assert not OilRecord.objects.exists()


def test_it_refuses_a_lot_of_another_oil(client, technician, on_bench, oil_part, oil, owner) -> None:
    from shopdesk.stock.models import Part
    from shopdesk.stock.services import stock_receive

    other = Part.objects.create(
        part_number="OIL-10",
        name="Other oil",
        kind="oil",
        unit_of_measure="ml",
        oil=oil,
        reorder_level=0,
        cost=Decimal("0.01"),
        price=Decimal("0.02"),
    )
    stock_receive(part=other, quantity=Decimal("500"), by=owner, lot_code="X-9")
    chamber = _chamber(on_bench, "damper")
    prefix = f"oil-{chamber.pk}"
    client.force_login(technician)
    response = client.post(
        reverse("workshop:oil", kwargs={"number": on_bench.number, "chamber_id": chamber.pk}),
        {
            f"{prefix}-filled_ml": "95",
            f"{prefix}-oil_part": oil_part.pk,
            f"{prefix}-oil_lot": other.lots.get().pk,
        },
    )
    assert "is not a lot of Test 5 wt oil" in response.content.decode()
    assert not OilRecord.objects.exists()


def test_a_second_save_from_an_old_version_is_refused_and_shows_the_other_values(
    client, technician, owner, on_bench, oil_part
) -> None:
    chamber = _chamber(on_bench, "damper")
    first = services.oil_record_save(
        work_order=on_bench,
        chamber=chamber,
        by=technician,
        values={"drained_ml": 100.0, "filled_ml": 95.0, "oil_part": oil_part},
    )
    services.oil_record_save(
        work_order=on_bench,
        chamber=chamber,
        by=owner,
        record=first,
        version=1,
        values={"drained_ml": 104.0, "filled_ml": 95.0, "oil_part": oil_part},
    )
    with pytest.raises(services.RecordConflict) as conflict:
        services.oil_record_save(
            work_order=on_bench,
            chamber=chamber,
            by=technician,
            record=first,
            version=1,
            values={"drained_ml": 90.0, "filled_ml": 95.0, "oil_part": oil_part},
        )
    assert conflict.value.current.drained_ml == 104.0
    record = OilRecord.objects.get()
    assert (record.drained_ml, record.version) == (104.0, 2)
    # The history keeps who changed what, with the old value.
    assert [h.drained_ml for h in record.history.order_by("history_date")] == [100.0, 100.0, 104.0]
    assert "drained ml 100 → 104" in WorkOrderEvent.objects.filter(kind="record").last().message


def test_voiding_keeps_the_record_and_returns_the_stock(on_bench, technician, oil_part) -> None:
    chamber = _chamber(on_bench, "damper")
    record = services.oil_record_save(
        work_order=on_bench, chamber=chamber, by=technician, values={"filled_ml": 95.0, "oil_part": oil_part}
    )
    assert on_hand(oil_part) == Decimal("1905")
    services.record_void(record=record, reason="Wrong chamber", by=technician)
    record.refresh_from_db()
    assert record.is_void and record.void_reason == "Wrong chamber"
    assert on_hand(oil_part) == Decimal("2000")
    with pytest.raises(services.RecordRefused):
        services.record_void(record=record, reason="again", by=technician)


def test_a_check_on_a_cancelled_job_is_refused(on_bench, technician, owner) -> None:
    check = on_bench.final_checks.first()
    services.work_order_move(work_order=on_bench, target=Status.CANCELLED, by=owner)
    with pytest.raises(services.RecordRefused, match="cancelled"):
        services.final_check_set(check=check, done=True, by=technician)
    check.refresh_from_db()
    assert not check.done


def test_the_spring_after_refuses_a_pressure_above_the_maximum(client, technician, on_bench) -> None:
    client.force_login(technician)
    response = client.post(
        reverse("workshop:spring", kwargs={"number": on_bench.number, "stage": "after"}),
        {"spring-after-positive_pressure_kpa": "175 psi"},  # 1207 kPa, over the 1100 kPa maximum
    )
    assert "Never exceed" in response.content.decode()
    assert not on_bench.springrecord_set.exists()


def test_the_front_desk_cannot_write_bench_records(client, front_desk, on_bench) -> None:
    chamber = _chamber(on_bench, "damper")
    client.force_login(front_desk)
    urls = [
        reverse("workshop:oil", kwargs={"number": on_bench.number, "chamber_id": chamber.pk}),
        reverse("workshop:spring", kwargs={"number": on_bench.number, "stage": "after"}),
        reverse("workshop:part", kwargs={"number": on_bench.number}),
        reverse("workshop:labour", kwargs={"number": on_bench.number}),
        reverse(
            "workshop:check", kwargs={"number": on_bench.number, "check_id": on_bench.final_checks.first().pk}
        ),
        reverse("workshop:take", kwargs={"number": on_bench.number}),
    ]
    for url in urls:
        assert client.post(url, {}).status_code == 403, url


def test_ready_for_pickup_lists_what_is_missing_then_closes_into_history(
    client, technician, front_desk, on_bench, oil_part
) -> None:
    with pytest.raises(services.MoveRefused, match="Oil filled in “Damper cartridge”"):
        services.work_order_move(work_order=on_bench, target=Status.FINAL_CHECK, by=technician)
        services.work_order_move(work_order=on_bench, target=Status.READY_FOR_PICKUP, by=technician)
    on_bench.refresh_from_db()
    finish_bench_work(on_bench, technician, oil_part)
    services.work_order_move(work_order=on_bench, target=Status.READY_FOR_PICKUP, by=technician)
    records = ServiceRecord.objects.filter(work_order=on_bench)
    assert sorted(records.values_list("service_type__name", flat=True)) == [
        "Damper service",
        "Lower-leg service",
    ]
    client.force_login(front_desk)
    body = client.get(reverse("customers:unit", kwargs={"unit_id": on_bench.unit_id})).content.decode()
    today = timezone.localdate()
    # Lower legs: 50 h at 4 h a week = 87 days, sooner than 12 months (common-practice interval)
    assert (today + datetime.timedelta(days=87)).strftime("%-d %b %Y") in body
    # Damper: 100 h at 4 h a week = 175 days, sooner than 24 months
    assert (today + datetime.timedelta(days=175)).strftime("%-d %b %Y") in body


def test_the_price_adds_parts_oil_and_extra_labour_with_tax_once(
    on_bench, technician, oil_part, settings
) -> None:
    settings.SHOP_LABOUR_RATE = Decimal("60.00")
    chamber = _chamber(on_bench, "damper")
    services.oil_record_save(
        work_order=on_bench, chamber=chamber, by=technician, values={"filled_ml": 95.0, "oil_part": oil_part}
    )
    services.labour_add(
        work_order=on_bench, technician=technician, minutes=30, charged_as_extra=True, by=technician
    )
    price = services.job_price(on_bench)
    # 45.00 + 89.50 services, 95 mL x 0.03 = 2.85 oil, 30 min x 60.00/h = 30.00 labour -> 167.35
    assert price.total.subtotal == Decimal("167.35")
    assert price.total.tax == Decimal("33.47")  # 20 % of 167.35 = 33.47
    assert price.total.total == Decimal("200.82")


def test_the_job_page_query_count_does_not_grow_with_records(
    client, technician, on_bench, oil_part, django_assert_max_num_queries
) -> None:
    client.force_login(technician)
    client.get(on_bench.get_absolute_url())
    from django.db import connection
    from django.test.utils import CaptureQueriesContext

    with CaptureQueriesContext(connection) as before:
        client.get(on_bench.get_absolute_url())
    for minutes in range(1, 9):
        services.labour_add(work_order=on_bench, technician=technician, minutes=minutes, by=technician)
    finish_bench_work(on_bench, technician, oil_part)
    with CaptureQueriesContext(connection) as after:
        client.get(on_bench.get_absolute_url())
    assert len(after) <= len(before) + 1, (
        len(before),
        len(after),
    )  # the spring plot's record is one query at most
    with django_assert_max_num_queries(45):
        client.get(on_bench.get_absolute_url())


def test_the_bench_queue_puts_my_jobs_first(client, technician, unit, front_desk, service_types) -> None:
    from shopdesk.workshop.services import work_order_check_in

    first = work_order_check_in(unit=unit, by=front_desk, service_types=service_types)
    second = work_order_check_in(unit=unit, by=front_desk, service_types=service_types)
    services.work_order_take(work_order=second, by=technician)
    client.force_login(technician)
    body = client.get(reverse("workshop:bench")).content.decode()
    assert body.index(second.number) < body.index(first.number)


def test_a_queue_row_shows_the_job_its_promise_and_who_has_it(
    client, technician, owner, unit, front_desk, service_types
) -> None:
    from shopdesk.workshop.models import WorkOrder
    from shopdesk.workshop.selectors import bench_queue
    from shopdesk.workshop.services import work_order_check_in

    mine = work_order_check_in(unit=unit, by=front_desk, service_types=service_types)
    services.work_order_take(work_order=mine, by=technician)
    theirs = work_order_check_in(unit=unit, by=front_desk, service_types=service_types)
    services.work_order_take(work_order=theirs, by=owner)
    late = timezone.localdate() - datetime.timedelta(days=1)
    waiting = work_order_check_in(unit=unit, by=front_desk, service_types=service_types)
    WorkOrder.objects.filter(pk=waiting.pk).update(promised_on=late)

    rows = {row.number: row for row in bench_queue(user=technician)}
    assert next(iter(rows)) == mine.number  # my own first
    assert (rows[mine.number].is_mine, rows[mine.number].status) == (True, "On the bench")
    assert rows[theirs.number].technician == owner.get_full_name() and not rows[theirs.number].is_mine
    assert (rows[waiting.number].technician, rows[waiting.number].is_late) == ("", True)
    assert rows[waiting.number].promised == late.strftime("%a %d %b").replace(" 0", " ")
    assert rows[waiting.number].take_address == reverse("workshop:take", args=[waiting.number])
    client.force_login(technician)
    body = client.get(reverse("workshop:bench")).content.decode()
    assert body.count(">Take</button>") == 2 and "<strong>You</strong>" in body


def test_the_job_page_query_count_does_not_grow_with_chambers(client, technician, on_bench, oil_part) -> None:
    # Every chamber's form offers the same oils and lots: they are read once for the page.
    from django.db import connection
    from django.test.utils import CaptureQueriesContext
    from django.utils.html import escape

    from shopdesk.specs.models import Chamber

    client.force_login(technician)
    client.get(on_bench.get_absolute_url())  # the session's expiry moved on: not counted below
    with CaptureQueriesContext(connection) as two_chambers:
        page = client.get(on_bench.get_absolute_url()).content.decode()
    model = on_bench.unit.unit_model
    for n in range(3):
        Chamber.objects.create(unit_model=model, name=f"Extra chamber {n}", kind="damper", volume_ml=20)
    with CaptureQueriesContext(connection) as five_chambers:
        crowded = client.get(on_bench.get_absolute_url()).content.decode()
    assert model.chambers.count() == 5
    assert len(five_chambers) == len(two_chambers)
    # and each of the five still offers the oil from stock
    option = f'<option value="{oil_part.pk}">{escape(str(oil_part))}</option>'
    assert page.count(option) == 2 and crowded.count(option) == 5


def test_the_job_page_shows_the_rules_answers_from_the_records_it_read(
    client, on_bench, technician, oil_part, settings
) -> None:
    # The page passes the records it reads to the ready and price rules; with voided records of
    # every kind beside live ones, it must show what the rules say when they read the job afresh.
    from shopdesk.specs.models import ServiceType

    settings.SHOP_LABOUR_RATE = Decimal("60.00")
    damper, lowers = _chamber(on_bench, "damper"), _chamber(on_bench, "lowers")
    wrong = services.oil_record_save(
        work_order=on_bench, chamber=damper, by=technician, values={"filled_ml": 80.0, "oil_part": oil_part}
    )
    services.record_void(record=wrong, reason="Wrong chamber.", by=technician)
    services.oil_record_save(
        work_order=on_bench,
        chamber=lowers,
        by=technician,
        values={"drained_ml": 12.0, "filled_ml": 15.0, "oil_part": oil_part},
    )
    part = services.part_use(work_order=on_bench, part=oil_part, quantity=Decimal("10"), by=technician)
    services.record_void(record=part, reason="Counted twice.", by=technician)
    services.labour_add(
        work_order=on_bench, technician=technician, minutes=30, charged_as_extra=True, by=technician
    )
    spare = services.labour_add(
        work_order=on_bench, technician=technician, minutes=45, charged_as_extra=True, by=technician
    )
    services.record_void(record=spare, reason="Not extra.", by=technician)
    services.spring_record_save(
        work_order=on_bench, stage="after", by=technician, values={"positive_pressure_kpa": 580.0}
    )
    air = ServiceType.objects.create(name="Air-spring service", scope="air_spring", price=Decimal("30.00"))
    on_bench.services.create(service_type=air, price=air.price, labour_minutes=30)
    first = on_bench.final_checks.first()
    services.final_check_set(check=first, done=True, by=technician)

    client.force_login(technician)
    shown = client.get(on_bench.get_absolute_url()).context
    on_bench.refresh_from_db()
    assert shown["missing"] == services.missing_before_ready(on_bench)
    assert shown["price"] == services.job_price(on_bench)
    assert shown["required_chambers"] == {chamber.pk for chamber in services.required_chambers(on_bench)}
    # and those answers are the right ones: the voided oil, part and labour count for nothing
    assert "Oil filled in “Damper cartridge”." in shown["missing"]
    assert "Labour minutes." not in shown["missing"]
    assert "The spring setup after the work." not in shown["missing"]
    assert [line.description for line in shown["price"].lines][-2:] == [
        f"{oil_part.name}, {lowers.name} (mL)",
        "Extra labour, 30 min",
    ]


# A refused void is the page again (200) with the refusal at the record's void form, the reason
# typed kept; before, it was a redirect with a message at the top of the page and the reason lost.


def _oil_record(on_bench, technician, oil_part):
    return services.oil_record_save(
        work_order=on_bench,
        chamber=_chamber(on_bench, "damper"),
        by=technician,
        values={"filled_ml": 95.0, "oil_part": oil_part},
    )


@pytest.mark.parametrize("reason", ["", "   ", "r" * 201])
def test_a_void_without_a_usable_reason_is_refused_at_its_form(
    client, technician, on_bench, oil_part, reason
) -> None:
    record = _oil_record(on_bench, technician, oil_part)
    client.force_login(technician)
    response = client.post(
        reverse("workshop:void", args=[on_bench.number, "oil", record.pk]), {"reason": reason}
    )
    assert response.status_code == 200
    refused = response.context["void_refused"]
    assert (refused.kind, refused.record_id, refused.shown) == ("oil", record.pk, True)
    assert refused.form.has_error("reason")
    html = response.content.decode()
    form_start = html.index(f'action="/jobs/{on_bench.number}/void/oil/{record.pk}/"')
    assert 'class="errorlist' in html[form_start : html.index("</form>", form_start)]
    record.refresh_from_db()
    assert not record.is_void


def test_voiding_a_record_already_void_says_so_above_the_records(
    client, technician, on_bench, oil_part
) -> None:
    record = _oil_record(on_bench, technician, oil_part)
    services.record_void(record=record, reason="Wrong chamber", by=technician)
    client.force_login(technician)
    url = reverse("workshop:void", args=[on_bench.number, "oil", record.pk])
    response = client.post(url, {"reason": "again"}, headers={"HX-Request": "true"})
    assert response.status_code == 200
    assert response.context["void_refused"].shown is False  # no void button for a void record
    assert "Not voided: This record is already void." in response.content.decode()
    record.refresh_from_db()
    assert record.void_reason == "Wrong chamber"


def test_a_refused_stack_void_is_the_valve_page_again(client, technician, on_bench) -> None:
    from shopdesk.workshop.models import ShimStackRecord
    from tests.workshop.test_revalve import BEFORE, _post, _url

    client.force_login(technician)
    assert client.post(_url(on_bench), _post(BEFORE)).status_code == 302
    record = ShimStackRecord.objects.get()
    client.force_login(technician)
    response = client.post(
        reverse("workshop:void", args=[on_bench.number, "stack", record.pk]), {"reason": " "}
    )
    assert response.status_code == 200
    assert response.context["panel"].valve == "rebound"
    assert response.context["void_refused"].form.has_error("reason")
    record.refresh_from_db()
    assert not record.is_void
