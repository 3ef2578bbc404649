"""Form fields drawn by Jinja2 from Django's own form templates: the same HTML, a fifth of the time."""

from __future__ import annotations

import re

import pytest
from django.forms import renderers
from django.template.backends.django import Template as DjangoTemplate
from django.template.backends.jinja2 import Template as Jinja2Template
from django.test import override_settings
from django.urls import reverse

from shopdesk.shop.form_renderer import ShopFormRenderer

DJANGO_LANGUAGE = "django.forms.renderers.DjangoTemplates"


def _normalised(html: str) -> str:
    html = re.sub(r'(name="csrfmiddlewaretoken" value=|"X-CSRFToken": )"[^"]+"', r"\1", html)
    return re.sub(r">\s+<", "><", re.sub(r"\s+", " ", html)).strip()


def _both(send) -> tuple[str, str]:
    """The page drawn by the shop's renderer and by Django's template language."""
    pages = []
    for renderer in ("shopdesk.shop.form_renderer.ShopFormRenderer", DJANGO_LANGUAGE):
        with override_settings(FORM_RENDERER=renderer):
            renderers.get_default_renderer.cache_clear()
            assert f"{type(renderers.get_default_renderer()).__module__}." in renderer
            pages.append(_normalised(send().content.decode()))
    renderers.get_default_renderer.cache_clear()
    return pages[0], pages[1]


@pytest.mark.parametrize(
    "page",
    ["job", "check-in", "new customer", "new unit", "calculators", "stock"],
)
def test_every_field_is_drawn_as_django_s_own_templates_draw_it(client, owner, work_order, page: str) -> None:
    address = {
        "job": work_order.get_absolute_url(),
        "check-in": reverse("workshop:check-in", kwargs={"unit_id": work_order.unit_id}),
        "new customer": reverse("customers:customer-new"),
        "new unit": reverse("customers:unit-new", kwargs={"customer_id": work_order.customer_id}),
        "calculators": reverse("calculators:index"),
        "stock": reverse("stock:list"),
    }[page]
    client.force_login(owner)
    shop, django = _both(lambda: client.get(address))
    assert shop.count("<input") > 3  # the page has fields to compare
    assert shop == django


def test_errors_at_the_field_are_drawn_the_same(client, front_desk, unit) -> None:
    client.force_login(front_desk)
    address = reverse("workshop:check-in", kwargs={"unit_id": unit.pk})
    shop, django = _both(lambda: client.post(address, {"arrival-positive_pressure_kpa": "85 kg"}))
    assert 'class="errorlist' in shop
    assert shop == django


def test_a_template_only_django_s_language_has_is_drawn_by_it() -> None:
    renderer = ShopFormRenderer()
    assert isinstance(renderer.get_template("django/forms/widgets/select.html"), Jinja2Template)
    # The admin's own widgets have no Jinja2 version.
    wrapper = "admin/widgets/related_widget_wrapper.html"
    assert isinstance(renderer.get_template(wrapper), DjangoTemplate)
    assert isinstance(renderer.get_template(wrapper), DjangoTemplate)  # asked again: straight to it
