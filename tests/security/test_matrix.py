"""Every URL pattern × every role: each gets exactly the access of the role table.

The role table is in DESIGN.md ("Who uses it") and DEVELOPERS.md ("Roles"); ``ACCESS`` below is
that table, one line per URL name. A URL pattern missing from ``ACCESS`` fails the test: add its
line when you add a page.
"""

from __future__ import annotations

import re
from decimal import Decimal

import pytest
from django.apps import apps
from django.contrib import admin
from django.urls import get_resolver, reverse

from shopdesk.workshop import flow
from shopdesk.workshop.converters import JOB_NUMBER
from shopdesk.workshop.models import Status, WorkOrder, WorkOrderEvent
from tests.accounts.test_access import _walk
from tests.conftest import finish_bench_work, finished_print_batch

ANON, DESK, TECH, OWNER = "anonymous", "front_desk", "technician", "owner"
ROLES = (ANON, DESK, TECH, OWNER)
STAFF = {DESK, TECH, OWNER}
BENCH = {TECH, OWNER}
COUNTER = {DESK, OWNER}

# url name: (method, the roles allowed, the status an allowed role gets). Refused roles get 403;
# anonymous visitors are sent to sign in (302). GET pages are fetched; POST-only views are sent
# an empty form, which they refuse with a message (200 re-render, or 302 back to the job).
ACCESS: dict[str, tuple[str, set[str], int]] = {
    "shop:home": ("get", STAFF, 200),
    "accounts:sign-in": ("get", {ANON}, 200),  # public; signed-in users are sent home (302)
    "accounts:sign-out": ("post", STAFF, 302),
    "admin-sign-in": ("get", {OWNER}, 302),  # hands the owner on to the admin
    "admin:login": ("get", {OWNER}, 302),  # the same path as admin-sign-in, which answers it
    "calculators:index": ("get", BENCH, 200),
    "customers:search": ("get", STAFF, 200),
    "customers:customer-new": ("get", COUNTER, 200),
    "customers:customer": ("get", STAFF, 200),
    "customers:customer-edit": ("get", COUNTER, 200),
    "customers:unit-new": ("get", COUNTER, 200),
    "customers:unit": ("get", STAFF, 200),
    "customers:unit-edit": ("get", COUNTER, 200),
    "workshop:check-in": ("get", COUNTER, 200),
    "workshop:quote": ("post", COUNTER, 200),
    "workshop:board": ("get", STAFF, 200),
    "workshop:bench": ("get", BENCH, 200),
    "workshop:work-order": ("get", STAFF, 200),
    "workshop:move": ("post", STAFF, 302),
    "workshop:take": ("post", BENCH, 302),
    "workshop:oil": ("post", BENCH, 200),
    "workshop:spring": ("post", BENCH, 200),
    "workshop:part": ("post", BENCH, 200),
    "workshop:labour": ("post", BENCH, 200),
    "workshop:check": ("post", BENCH, 302),
    "workshop:valve": ("get", STAFF, 200),
    "workshop:stack": ("post", BENCH, 200),
    "workshop:stack-library": ("get", STAFF, 200),
    "workshop:void": ("post", BENCH, 200),  # no reason given: the page again, the refusal at the form
    "workshop:payment": ("post", COUNTER, 200),  # the empty form again, its errors at the fields
    "workshop:payment-void": ("post", {OWNER}, 200),  # a payment taken in error: the owner's
    "stock:list": ("get", STAFF, 200),
    "stock:part-new": ("get", {OWNER}, 200),
    "stock:part": ("get", STAFF, 200),
    "stock:part-edit": ("get", {OWNER}, 200),
    "stock:receive": ("get", {OWNER}, 200),
    "stock:adjust": ("get", {OWNER}, 200),
    "safekeeping:export": ("get", {OWNER}, 200),
    "documents:job-card": ("get", STAFF, 200),
    # The fixture's job is not ready yet: back to the job page, which says so.
    "documents:service-report": ("get", COUNTER, 302),
    "documents:batch-new": ("get", STAFF, 200),
    "documents:batch": ("get", STAFF, 200),
    "documents:batch-file": ("get", STAFF, 200),
    "owner:dashboard": ("get", {OWNER}, 200),
    "owner:remind": ("post", {OWNER}, 302),
    "owner:wording": ("get", {OWNER}, 200),
    "owner:unsubscribe": ("get", {ANON, DESK, TECH, OWNER}, 200),  # public: a reminder's link
    "owner:unit-calendar": ("get", STAFF, 200),
    "owner:numbers": ("get", {OWNER}, 200),
    "owner:numbers-csv": ("get", {OWNER}, 200),
}
# The admin (spec sheets, service types and prices, users, sign-in locks) is the owner's: every
# admin page answers the owner and sends everyone else to sign in, except these, which the
# admin refuses to everyone: the stock ledger, the print batches and the sign-in records are
# written by the shop, never added or deleted by hand, and autocomplete answers only its own
# widgets' queries.
ADMIN_REFUSED = {
    "admin:autocomplete",
    "admin:documents_printbatch_add",
    "admin:stock_stockmovement_add",
    "admin:stock_stockmovement_delete",
    "admin:axes_accessattempt_add",
    "admin:axes_accessfailurelog_add",
    "admin:axes_accesslog_add",
}

PATTERNS = sorted({(pattern, name) for pattern, name in _walk(get_resolver().url_patterns)})


@pytest.fixture
def shop(work_order, technician, front_desk, oil_part):
    """One of each kind of record, so that every URL can be filled in with a real one."""

    from shopdesk.owner.models import DueService
    from shopdesk.owner.services import due_refresh, unsubscribe_token
    from shopdesk.workshop.services.payments import payment_take

    finish_bench_work(work_order, technician, oil_part)
    payment = payment_take(work_order=work_order, amount=Decimal("10.00"), method="cash", by=front_desk)
    unit = work_order.unit
    oil_record = work_order.oilrecord_set.first()
    batch = finished_print_batch(work_order, front_desk)
    due_refresh(unit=unit)
    return {
        "batch_id": batch.pk,
        "payment_id": payment.pk,
        "due_id": DueService.objects.filter(unit=unit).values_list("pk", flat=True).first(),
        "token": unsubscribe_token(customer_id=unit.customer_id),
        "table": "parts",
        "customer_id": unit.customer_id,
        "unit_id": unit.pk,
        "number": work_order.number,
        "chamber_id": oil_record.chamber_id,
        "stage": "after",
        "valve": "rebound",
        "check_id": work_order.final_checks.first().pk,
        "kind": "oil",
        "record_id": oil_record.pk,
        "part_id": oil_part.pk,
        "unit_model_id": unit.unit_model_id,
    }


def _is_admin(pattern: str) -> bool:
    return pattern.startswith("admin/") and not pattern.startswith("admin/login/")


def _admin_kwargs(name: str, params: list[str]) -> dict[str, object] | None:
    """A real object for an admin page's parameters; None when the model has none yet."""
    kwargs: dict[str, object] = {}
    for param in params:
        if param == "app_label":
            kwargs[param] = name.split(":")[1].split("_")[0] if name != "admin:app_list" else "customers"
        elif param == "object_id":
            model = next(
                (
                    model
                    for model in admin.site._registry
                    if name.startswith(f"admin:{model._meta.app_label}_{model._meta.model_name}_")
                ),
                None,
            )
            obj = model._default_manager.order_by("pk").first() if model else None
            if obj is None:
                return None
            kwargs[param] = obj.pk
        else:
            return None
    return kwargs


def _url(pattern: str, name: str, shop: dict[str, object]) -> str | None:
    params = re.findall(r"<(?:\w+:)?(\w+)>", pattern) + re.findall(r"\(\?P<(\w+)>", pattern)
    if _is_admin(pattern):
        if re.search(r"\((?!\?P<)", pattern):
            # Positional groups: only django-simple-history's "this version" pages, reached from
            # the history page that is tried; they are the owner's like the rest of the admin.
            assert name.endswith("_simple_history"), pattern
            return None
        kwargs = _admin_kwargs(name, params)
        return None if kwargs is None else reverse(name, kwargs=kwargs)
    return reverse(name, kwargs={param: shop[param] for param in params})


def test_every_url_pattern_has_a_line_in_the_table() -> None:
    missing = [
        f"{pattern} ({name})" for pattern, name in PATTERNS if not _is_admin(pattern) and name not in ACCESS
    ]
    assert not missing, "add these to ACCESS in tests/security/test_matrix.py:\n" + "\n".join(missing)
    stale = set(ACCESS) - {name for _, name in PATTERNS}
    assert not stale, f"ACCESS names URLs that no longer exist: {stale}"


@pytest.mark.django_db
@pytest.mark.parametrize("role", ROLES)
def test_each_role_gets_exactly_the_access_of_the_role_table(client, role_users, shop, role) -> None:
    wrong = []
    for pattern, name in PATTERNS:
        if name is None:
            continue  # the admin's unnamed redirects; every named admin page is tried below
        if role != ANON:
            client.force_login(role_users[role])  # again: the sign-out row signs out
        url = _url(pattern, name, shop)
        if url is None:
            continue  # an admin object page of a model with no rows yet
        if _is_admin(pattern):
            response = client.get(url)
            if role == OWNER:
                if name in ADMIN_REFUSED:
                    ok = response.status_code == 403
                elif name == "admin:logout":
                    ok = response.status_code == 405  # signing out is a POST
                else:
                    ok = response.status_code in {200, 302}
                    ok = ok and not (response.status_code == 302 and "/login/" in response["Location"])
            else:
                # To sign in, or (signing out of an admin they are not in) to the admin's door.
                ok = response.status_code == 302 and (
                    response["Location"].startswith(("/admin/login/", reverse("accounts:sign-in")))
                    or (name == "admin:logout" and response["Location"] == reverse("admin:index"))
                )
            if not ok:
                wrong.append(f"{name} {url}: {response.status_code} {response.get('Location', '')}")
            continue
        method, allowed, status = ACCESS[name]
        response = getattr(client, method)(url, {})
        if role in allowed:
            expected = status
        elif role == ANON:
            expected = 302
        elif name == "accounts:sign-in":
            expected = 302  # already signed in: sent on
        else:
            expected = 403
        got = response.status_code
        if got != expected:
            wrong.append(f"{method.upper()} {url} ({name}): {got}, table says {expected}")
        elif (
            got == 302
            and role == ANON
            and role not in allowed
            and not response["Location"].startswith(reverse("accounts:sign-in"))
        ):
            wrong.append(f"{url}: anonymous sent to {response['Location']}")
    assert not wrong, f"{role}:\n" + "\n".join(wrong)


# What each kind of record shows on its pages (the conftest fixtures' values), to look for it
# where it must not appear.
MARKERS = {
    "customer_id": "Ada Marsh",
    "unit_id": "RF34-0001",
    "part_id": "OIL-5WT",
    "unit_model_id": "Ridge 34",
    "batch_id": "in one PDF",
}


def _guessed_url(name: str, kwargs: dict[str, object]) -> str:
    """The address with a guessed value. A guessed job number that is not one ("OIL-5WT") is not
    reversed by the <job:number> converter: it is put in the path by hand, and the resolver
    answers 404 before any view or query."""
    number = kwargs.get("number")
    if number is None or JOB_NUMBER.fullmatch(str(number)):
        return reverse(name, kwargs=kwargs)
    return reverse(name, kwargs={**kwargs, "number": "2099-9999"}).replace("/2099-9999/", f"/{number}/")


@pytest.mark.django_db
def test_guessed_ids_and_ids_of_another_record_type_show_nothing(client, owner, shop) -> None:
    from shopdesk.customers.models import Customer, Unit
    from shopdesk.documents.models import PrintBatch
    from shopdesk.specs.models import UnitModel
    from shopdesk.stock.models import Part

    # More parts and units, so that their ids are not also a customer's or a spec sheet's.
    for n in range(3):
        Part.objects.create(
            part_number=f"SEAL-{n}",
            name=f"Dust seal {n}",
            kind=Part.Kind.PART,
            cost=Decimal("2"),
            price=Decimal("6"),
        )
    models_of = {
        "customer_id": Customer,
        "unit_id": Unit,
        "part_id": Part,
        "unit_model_id": UnitModel,
        "batch_id": PrintBatch,
    }
    client.force_login(owner)  # every permission: a 404 here is the record's absence, not the role
    tried = 0
    for pattern, name in PATTERNS:
        if name is None or _is_admin(pattern) or ACCESS[name][0] != "get":
            continue
        params = re.findall(r"<(?:\w+:)?(\w+)>", pattern)
        for param in params:
            if param == "number":
                guesses = {"2099-9999": None, "OIL-5WT": "part_id", str(shop["customer_id"]): "customer_id"}
            elif param in models_of:
                guesses = {"987654": None}
                for other, value in shop.items():
                    taken = models_of[param].objects.filter(pk=value).exists() if other in models_of else True
                    if other != param and not taken:
                        guesses[str(value)] = other
            else:
                continue
            for guess, other in guesses.items():
                kwargs = {p: shop[p] for p in params}
                kwargs[param] = guess
                url = _guessed_url(name, kwargs)
                response = client.get(url)
                tried += 1
                assert response.status_code == 404, f"{url} ({name}) answered {response.status_code}"
                page = response.content.decode()
                assert "There is no such page or record" in page, url
                if other is not None:
                    assert MARKERS[other] not in page, f"{url} shows the {other} record's data"
    assert tried >= 18, tried


# Who may make each kind of move, as the role table says (DEVELOPERS.md, "Roles"): the bench's
# moves are the technician's; checking in (to waiting for parts), handing back and cancelling are
# the front desk's; the owner may make every move.
MOVERS = {
    flow.BENCH: {TECH, OWNER},
    flow.FRONT_DESK: {DESK, OWNER},
    flow.HAND_BACK: {DESK, OWNER},
    flow.CANCEL: {DESK, OWNER},
}


@pytest.mark.django_db
@pytest.mark.parametrize("move", flow.MOVES, ids=lambda move: f"{move.source.value}-to-{move.target.value}")
@pytest.mark.parametrize("role", ROLES)
def test_each_move_is_made_exactly_by_the_roles_the_table_allows(
    client, role_users, work_order, technician, oil_part, move, role
) -> None:
    if move.target == Status.READY_FOR_PICKUP:
        finish_bench_work(work_order, technician, oil_part)  # nothing missing: only the role decides
    WorkOrder.objects.filter(pk=work_order.pk).update(status=move.source)
    events = WorkOrderEvent.objects.filter(work_order=work_order).count()
    if role != ANON:
        client.force_login(role_users[role])
    response = client.post(reverse("workshop:move", args=[work_order.number]), {"to": move.target.value})
    work_order.refresh_from_db()
    if role in set().union(*(MOVERS[permission] for permission in move.permissions)):
        assert response.status_code == 302 and response["Location"] == work_order.get_absolute_url()
        assert work_order.status == move.target
        stamped = WorkOrderEvent.objects.filter(work_order=work_order).order_by("pk").last()
        assert (stamped.from_status, stamped.to_status) == (move.source, move.target)
        assert stamped.by == role_users[role]
        return
    assert work_order.status == move.source, "refused, but the status changed"
    assert WorkOrderEvent.objects.filter(work_order=work_order).count() == events
    if role == ANON:
        assert response.status_code == 302 and response["Location"].startswith(reverse("accounts:sign-in"))
    else:
        assert response.status_code == 403
        assert "Not for your role" in response.content.decode()


# GET pages whose form posts back to the same address, an id in it. A GET page with an id that is
# not listed here must refuse a POST (405): the guard test below holds that.
FORM_PAGES = {
    "customers:customer-edit",
    "customers:unit-new",
    "customers:unit-edit",
    "workshop:check-in",
    "stock:part-edit",
    "stock:receive",
    "stock:adjust",
}
SHOP_APPS = ("customers", "specs", "stock", "workshop", "documents", "owner")


def _id_params(pattern: str) -> list[str]:
    return [p for p in re.findall(r"<(?:\w+:)?(\w+)>", pattern) if p == "number" or p.endswith("_id")]


def _posted_with_ids() -> list[tuple[str, str]]:
    return [
        (pattern, name)
        for pattern, name in PATTERNS
        if name in ACCESS and (ACCESS[name][0] == "post" or name in FORM_PAGES) and _id_params(pattern)
    ]


def _everything() -> dict[str, list[dict]]:
    """Every row of the shop's own tables (their histories too), to see that nothing changed."""
    return {
        model._meta.label: list(model._default_manager.order_by("pk").values())
        for label in SHOP_APPS
        for model in apps.get_app_config(label).get_models()
    }


@pytest.fixture
def other_job(shop, technician, front_desk, oil_part, service_types, air_fork_model):
    """Another customer's job, on another spec sheet, finished on the bench: its ids are the
    "another job's record" guesses."""
    from shopdesk.customers.models import Customer, Unit
    from shopdesk.specs.models import Chamber, UnitModel
    from shopdesk.workshop.services import work_order_check_in

    chambers = list(air_fork_model.chambers.all())
    other_model = UnitModel.objects.get(pk=air_fork_model.pk)  # a copy: the fixture's stays as it is
    other_model.pk = None
    other_model.name = "Ridge 36 Other"
    other_model.save()
    for chamber in chambers:
        chamber.pk, chamber.unit_model = None, other_model
        chamber.save()
    customer = Customer.objects.create(name="Bea Flint", phone="01632 960 777")
    unit = Unit.objects.create(
        customer=customer, unit_model=other_model, serial_number="RS36-0777", model_year=2024, travel_mm=150
    )
    job = work_order_check_in(
        unit=unit, by=front_desk, service_types=service_types, complaint="Creaks at full travel."
    )
    finish_bench_work(job, technician, oil_part)
    return {
        "ids": {
            "chamber_id": Chamber.objects.filter(unit_model=other_model).first().pk,
            "check_id": job.final_checks.first().pk,
            "record_id": job.oilrecord_set.first().pk,
        },
        "markers": [job.number, "Bea Flint", "RS36-0777", "Creaks at full travel", "Ridge 36 Other"],
    }


def _post_body(shop: dict[str, object], chamber_ids: list[object]) -> dict[str, object]:
    """One body that every posted form would accept, so that a view that read the record from a
    guessed id would change it and the test would see it."""
    body: dict[str, object] = {
        "to": Status.CANCELLED.value,
        "note": "guessed",  # no "done": a final check posted is set not done
        "reason": "guessed id",
        "name": "Guessed Name",
        "phone": "01632 960 000",
        "quantity": "5",
        "lot_code": "GUESS-1",
        "part-part": shop["part_id"],
        "part-quantity": "5",
        "labour-minutes": "30",
    }
    for chamber in chamber_ids:
        body |= {
            f"oil-{chamber}-drained": "80",
            f"oil-{chamber}-filled_ml": "80",
            f"oil-{chamber}-condition": "dark",
        }
    return body


@pytest.mark.django_db
def test_guessed_ids_and_another_jobs_ids_change_nothing_when_posted(client, owner, shop, other_job) -> None:
    client.force_login(owner)  # every permission: a 404 here is the record's absence, not the role
    other_ids = other_job["ids"]
    body = _post_body(shop, [shop["chamber_id"], other_ids["chamber_id"], "987654"])
    before = _everything()
    tried = set()
    for pattern, name in _posted_with_ids():
        params = re.findall(r"<(?:\w+:)?(\w+)>", pattern)
        for param in _id_params(pattern):
            if param == "number":
                guesses = {"2099-9999": None, "OIL-5WT": None, str(shop["customer_id"]): None}
            else:
                guesses = {"987654": None}
                if param in other_ids:
                    guesses[str(other_ids[param])] = "another job's"
            for guess, whose in guesses.items():
                kwargs = {p: shop[p] for p in params} | {param: guess}
                url = _guessed_url(name, kwargs)
                response = client.post(url, body)
                tried.add((name, param, whose))
                assert response.status_code == 404, f"POST {url} ({name}) answered {response.status_code}"
                page = response.content.decode()
                assert "There is no such page or record" in page, url
                if whose:
                    shown = [marker for marker in other_job["markers"] if marker in page]
                    assert not shown, f"POST {url} shows the other job's {shown}"
                assert _everything() == before, f"POST {url} ({name}) changed something"
    # The posts with an id of another job's record: a chamber, a final check and a bench record.
    assert {(name, param) for name, param, whose in tried if whose} == {
        ("workshop:oil", "chamber_id"),
        ("workshop:check", "check_id"),
        ("workshop:void", "record_id"),
    }
    assert {"workshop:move", "workshop:take", "owner:remind", "stock:adjust"} <= {
        name for name, _, _ in tried
    }
    # The same post with the job's own final check does change it: the comparison sees a change.
    own = reverse("workshop:check", kwargs={"number": shop["number"], "check_id": shop["check_id"]})
    assert client.post(own, body).status_code == 302
    assert _everything() != before


@pytest.mark.django_db
def test_a_get_page_with_an_id_and_no_form_refuses_a_post(client, owner, shop) -> None:
    # Holds FORM_PAGES above complete: a page that takes a POST is tried by the test above.
    client.force_login(owner)
    taken = []
    for pattern, name in PATTERNS:
        if name not in ACCESS or ACCESS[name][0] != "get" or name in FORM_PAGES or not _id_params(pattern):
            continue
        url = _url(pattern, name, shop)
        if client.post(url, {}).status_code != 405:
            taken.append(f"{name} {url}")
    assert not taken, "these take a POST: add them to FORM_PAGES in tests/security/test_matrix.py:\n" + (
        "\n".join(taken)
    )
