"""Every form of the shop, posted random and hostile values through the test client.

For each form found on the shop's pages (the page is fetched and its <form>s read, so a field
added to a form is posted too), hypothesis draws values: huge numbers, NaN and infinities,
unicode, very long text, missing fields, several values for one field. Whatever is sent:

- never a 500 (the test client raises the view's exception if one escapes);
- a post that is refused re-renders the page with an error beside a field (or in the form's
  own error list), and nothing already saved changes;
- a post that is taken is answered with a redirect, as every saving view here does.
"""

from __future__ import annotations

from html.parser import HTMLParser

import pytest
from django.apps import apps
from django.urls import reverse
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from tests.conftest import finish_bench_work

pytestmark = pytest.mark.django_db

HOSTILE = st.one_of(
    st.sampled_from(
        [
            "",
            " ",
            "0",
            "-1",
            "1e308",
            "-1e308",
            "1e999",
            "9" * 400,
            "NaN",
            "nan",
            "inf",
            "-Infinity",
            "0x1F",
            "١٢٣",  # Arabic-Indic digits
            "５.９ bar",  # full-width digits
            "5.9 bar",
            "120 cc",
            "12 furlongs",
            "-5 psi",
            "3,5",
            "\x00",
            "<script>alert(1)</script>",
            "' OR 1=1 --",
            "Ünïcödé 🚲 ✓",
            "x" * 5000,
            "2026-02-30",
            "on",
            "true",
        ]
    ),
    st.integers(min_value=-(10**30), max_value=10**30).map(str),
    st.floats(allow_nan=True, allow_infinity=True).map(repr),
    st.text(max_size=40),
)
SHOP_APPS = ("customers", "workshop", "stock", "specs", "owner", "documents")


class _Forms(HTMLParser):
    """The forms of a page sent with ``method``: action → field names (the CSRF token left out)."""

    def __init__(self, method: str = "post") -> None:
        super().__init__()
        self.method = method
        self.forms: dict[str, set[str]] = {}
        self._action: str | None = None

    def handle_starttag(self, tag: str, attrs: list[tuple[str, str | None]]) -> None:
        values = dict(attrs)
        if tag == "form" and (values.get("method") or "get").lower() == self.method:
            self._action = values.get("action") or ""
            self.forms.setdefault(self._action, set())
        elif tag in {"input", "select", "textarea"} and self._action is not None:
            name = values.get("name")
            if name and name != "csrfmiddlewaretoken":
                self.forms[self._action].add(name)

    def handle_endtag(self, tag: str) -> None:
        if tag == "form":
            self._action = None


_PAGES: dict[tuple[str, str], dict[str, set[str]]] = {}


def _forms_on(client, url: str, role: str, shop) -> dict[str, set[str]]:
    # One fetch per page and role for all of a test's examples (the fixture's ids stay the same).
    key = (url, role, *(obj.pk for obj in shop), shop[0].unit.unit_model_id)
    if key in _PAGES:
        return _PAGES[key]
    response = client.get(url)
    assert response.status_code == 200, url
    parser = _Forms()
    parser.feed(response.content.decode())
    _PAGES[key] = parser.forms
    return parser.forms


def _snapshot() -> dict[str, list[tuple]]:
    rows = {}
    for label in SHOP_APPS:
        for model in apps.get_app_config(label).get_models():
            rows[model._meta.label] = list(model._base_manager.order_by("pk").values_list())
    return rows


@pytest.fixture
def shop(work_order, technician, oil_part, role_users):
    finish_bench_work(work_order, technician, oil_part)
    return work_order, oil_part


# (the page whose forms are posted, the action the form posts to, who posts it)
def _cases(work_order, part) -> list[tuple[str, str, str]]:
    unit = work_order.unit
    job = reverse("workshop:work-order", kwargs={"number": work_order.number})
    return [
        (reverse("customers:customer-new"), "customers:customer-new", "front_desk"),
        (
            reverse("customers:customer-edit", args=[unit.customer_id]),
            "customers:customer-edit",
            "front_desk",
        ),
        (reverse("customers:unit-new", args=[unit.customer_id]), "customers:unit-new", "front_desk"),
        (reverse("customers:unit-edit", args=[unit.pk]), "customers:unit-edit", "front_desk"),
        (reverse("workshop:check-in", args=[unit.pk]), "workshop:check-in", "front_desk"),
        (job, "workshop:oil", "technician"),
        (job, "workshop:spring", "technician"),
        (job, "workshop:part", "technician"),
        (job, "workshop:labour", "technician"),
        (job, "workshop:void", "technician"),
        (job, "workshop:move", "technician"),
        (reverse("workshop:valve", args=[work_order.number, "rebound"]), "workshop:stack", "technician"),
        (reverse("stock:part-new"), "stock:part-new", "owner"),
        (reverse("stock:part-edit", args=[part.pk]), "stock:part-edit", "owner"),
        (reverse("stock:receive", args=[part.pk]), "stock:receive", "owner"),
        (reverse("stock:adjust", args=[part.pk]), "stock:adjust", "owner"),
        (job, "workshop:check", "technician"),
        (reverse("documents:batch-new"), "documents:batch-new", "front_desk"),
        (reverse("owner:wording"), "owner:wording", "owner"),
    ]


FORMS = [
    "customers:customer-new",
    "customers:customer-edit",
    "customers:unit-new",
    "customers:unit-edit",
    "workshop:check-in",
    "workshop:oil",
    "workshop:spring",
    "workshop:part",
    "workshop:labour",
    "workshop:void",
    "workshop:move",
    "workshop:stack",
    "stock:part-new",
    "stock:part-edit",
    "stock:receive",
    "stock:adjust",
    "workshop:check",
    "documents:batch-new",
    "owner:wording",
]


@pytest.mark.parametrize("form_name", FORMS)
@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(data=st.data())
def test_hostile_values_never_break_a_form_or_what_is_saved(
    client, shop, role_users, form_name, data
) -> None:
    from django.urls import resolve

    page, _, role = next(case for case in _cases(*shop) if case[1] == form_name)
    client.force_login(role_users[role])
    forms = {
        action or page: names  # a form without an action posts to its own page
        for action, names in _forms_on(client, page, role, shop).items()
        if resolve((action or page).split("?")[0]).view_name == form_name
    }
    assert forms, f"no form posting to {form_name} on {page}"
    action = data.draw(st.sampled_from(sorted(forms)), label="action")
    names = sorted(forms[action])
    values: dict[str, object] = {}
    for name in names:
        how = data.draw(st.sampled_from(["value", "value", "value", "missing", "several"]), label=name)
        if how == "value":
            values[name] = data.draw(HOSTILE, label=name)
        elif how == "several":
            values[name] = [data.draw(HOSTILE), data.draw(HOSTILE)]
    before = _snapshot()
    response = client.post(action, values)
    # 400: the print page answers a refused batch so (its message is in the form's error list)
    assert response.status_code in {200, 302, 400}, f"{action}: {response.status_code}"
    if response.status_code in {200, 400}:
        page_text = response.content.decode()
        assert 'class="errorlist' in page_text or 'class="error"' in page_text, (
            f"{action} refused {values!r} without saying why at a field"
        )
        assert _snapshot() == before, f"{action} changed saved records while refusing {values!r}"


# The search and filter forms (GET): whatever is typed, the page answers, with a message where a
# value makes no sense, and nothing is saved.
GET_PAGES = [
    ("customers:search", "front_desk"),
    ("stock:list", "front_desk"),
    ("calculators:index", "technician"),
    ("owner:dashboard", "owner"),
    ("owner:numbers", "owner"),
]


@pytest.mark.parametrize(("page_name", "role"), GET_PAGES)
@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(data=st.data())
def test_hostile_values_never_break_a_search_or_filter(
    client, shop, role_users, page_name, role, data
) -> None:
    page = reverse(page_name)
    client.force_login(role_users[role])
    response = client.get(page)
    assert response.status_code == 200, page
    parser = _Forms("get")
    parser.feed(response.content.decode())
    names = sorted({name for fields in parser.forms.values() for name in fields})
    assert names, f"no search or filter form on {page}"
    picked = data.draw(st.lists(st.sampled_from(names), min_size=1, max_size=6, unique=True), label="fields")
    values = {name: data.draw(HOSTILE, label=name) for name in picked}
    before = _snapshot()
    response = client.get(page, values)
    assert response.status_code in {200, 400}, f"{page} {values!r}: {response.status_code}"
    assert _snapshot() == before, f"{page} changed saved records for {values!r}"


# What hypothesis found, kept as plain examples.
def test_an_empty_post_is_validated_not_shown_as_a_fresh_form(client, shop, role_users) -> None:
    _, part = shop
    client.force_login(role_users["owner"])
    response = client.post(reverse("stock:receive", args=[part.pk]), {})
    assert response.status_code == 200
    assert response.context["form"].errors["quantity"] == ["This field is required."]
    client.force_login(role_users["front_desk"])
    response = client.post(reverse("customers:customer-new"), {})
    assert response.context["form"].errors["name"] == ["This field is required."]


def test_an_empty_post_of_the_reminder_wording_is_refused_at_its_fields(client, shop, role_users) -> None:
    client.force_login(role_users["owner"])
    response = client.post(reverse("owner:wording"), {})
    assert response.status_code == 200
    assert response.context["form"].errors["subject"] == ["This field is required."]


def test_a_mangled_version_says_to_reload_the_page(client, shop, role_users) -> None:
    # Found by hypothesis: a version of " " was refused with its message on the hidden field only.
    from shopdesk.workshop.models import SpringRecord

    work_order, _ = shop
    saved = list(SpringRecord.objects.filter(work_order=work_order).values_list())
    client.force_login(role_users["technician"])
    url = reverse("workshop:spring", args=[work_order.number, "after"])
    response = client.post(url, {"spring-after-version": " ", "spring-after-spacer_count": "2"})
    assert response.status_code == 200
    assert "reload the job page and enter the values again" in response.content.decode()
    assert list(SpringRecord.objects.filter(work_order=work_order).values_list()) == saved


def test_a_huge_volume_is_refused_at_the_field(client, shop, role_users) -> None:
    from shopdesk.stock.models import StockMovement

    _, part = shop
    client.force_login(role_users["owner"])
    before = StockMovement.objects.count()
    response = client.post(reverse("stock:receive", args=[part.pk]), {"quantity": "1e308"})
    assert response.status_code == 200
    assert "is far more than any delivery or fill" in response.content.decode()
    assert StockMovement.objects.count() == before


def test_a_bench_record_posted_without_its_version_is_a_conflict_not_an_overwrite(
    client, shop, role_users
) -> None:
    from shopdesk.workshop.models import OilRecord

    work_order, _ = shop
    record = OilRecord.objects.filter(work_order=work_order).first()
    saved = (record.drained_ml, record.filled_ml, record.version)
    client.force_login(role_users["technician"])
    url = reverse("workshop:oil", args=[work_order.number, record.chamber_id])
    response = client.post(url, {f"oil-{record.chamber_id}-drained_ml": "1"})
    assert response.status_code == 200
    assert "saved this record while you were editing it" in response.content.decode()
    record.refresh_from_db()
    assert (record.drained_ml, record.filled_ml, record.version) == saved
