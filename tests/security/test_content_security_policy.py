"""The content security policy: the shop's own files only, no inline script, no eval."""

from __future__ import annotations

import json
import re
from pathlib import Path

import pytest
from django.urls import reverse

TEMPLATES = Path(__file__).resolve().parents[2] / "templates"


def _policy(response) -> dict[str, list[str]]:
    header = response["Content-Security-Policy"]
    directives = {}
    for part in header.split(";"):
        words = part.split()
        if words:
            directives[words[0]] = words[1:]
    return directives


@pytest.mark.django_db
def test_every_page_carries_a_policy_without_inline_script_or_eval(client, front_desk) -> None:
    client.force_login(front_desk)
    response = client.get(reverse("shop:home"))
    policy = _policy(response)
    assert policy["script-src"] == ["'self'"]
    assert policy["style-src"] == ["'self'"]
    assert policy["object-src"] == ["'none'"]
    assert policy["frame-ancestors"] == ["'none'"]
    for directive, sources in policy.items():
        assert "'unsafe-eval'" not in sources, directive
        assert "'unsafe-inline'" not in sources, directive
    # The sign-in page, seen before anyone signs in, has it too.
    client.logout()
    assert _policy(client.get(reverse("accounts:sign-in")))["script-src"] == ["'self'"]


@pytest.mark.django_db
def test_htmx_is_told_not_to_inject_styles_or_evaluate_code(client, front_desk) -> None:
    client.force_login(front_desk)
    page = client.get(reverse("shop:home")).content.decode()
    match = re.search(r"<meta name=\"htmx-config\" content='([^']*)'>", page)
    assert match, "base.html has no htmx-config meta tag"
    config = json.loads(match.group(1))
    assert config["includeIndicatorStyles"] is False
    assert config["allowEval"] is False


def _template_files() -> list[Path]:
    # templates/documents/ are printed by WeasyPrint into PDFs, never sent to a browser as pages:
    # the policy does not apply to them.
    files = sorted(p for p in TEMPLATES.rglob("*.html") if p.relative_to(TEMPLATES).parts[0] != "documents")
    assert len(files) > 20, "the walk found too few templates"
    return files


def test_no_template_has_an_inline_script_handler_or_style() -> None:
    found = []
    for file in _template_files():
        text = file.read_text()
        for number, line in enumerate(text.splitlines(), start=1):
            where = f"{file.relative_to(TEMPLATES)}:{number}"
            if re.search(r"<script\b(?![^>]*\bsrc=)", line, re.IGNORECASE):
                found.append(f"{where}: <script> without src")
            if re.search(r"\son[a-z]+\s*=", line, re.IGNORECASE):
                found.append(f"{where}: inline event handler")
            if re.search(r"\shx-on[:-]", line):
                found.append(f"{where}: hx-on (evaluated code)")
            if re.search(r"\sstyle\s*=", line, re.IGNORECASE):
                found.append(f"{where}: style attribute")
            if re.search(r"<style\b", line, re.IGNORECASE):
                found.append(f"{where}: <style> block")
            if re.search(r"""(hx-vals|hx-headers)\s*=\s*['"]\s*(js|javascript):""", line):
                found.append(f"{where}: evaluated hx attribute")
    assert not found, "\n".join(found)


def test_the_grep_catches_what_it_looks_for(tmp_path) -> None:
    # The patterns above, tried on lines that must be caught and one that must not.
    bad = ['<button onclick="x()">', "<script>alert(1)</script>", '<div style="color: red">']
    good = '<script src="/static/js/htmx.min.js" defer></script>'
    assert all(
        re.search(r"<script\b(?![^>]*\bsrc=)", line)
        or re.search(r"\son[a-z]+\s*=", line)
        or re.search(r"\sstyle\s*=", line)
        for line in bad
    )
    assert not re.search(r"<script\b(?![^>]*\bsrc=)", good)


# The patterns the template grep above looks for, on a page as the browser gets it.
INLINE = {
    "<script> without src": r"<script\b(?![^>]*\bsrc=)",
    "inline event handler": r"<[a-z][^>]*\son[a-z]+\s*=",
    "style attribute": r"<[a-z][^>]*\sstyle\s*=",
    "<style> block": r"<style\b",
}


def _inline_code(page: str) -> list[str]:
    return [what for what, pattern in INLINE.items() if re.search(pattern, page, re.IGNORECASE)]


def test_the_page_grep_catches_what_it_looks_for() -> None:
    assert _inline_code('<p class="paginator" style="border-top: 0">') == ["style attribute"]
    assert _inline_code("<style>\n#changelist th {width: inherit}\n</style>") == ["<style> block"]
    assert _inline_code('<a href="#" onclick="go()">') == ["inline event handler"]
    assert _inline_code('<script src="/static/admin/js/theme.js"></script><p>Based on=spec</p>') == []


@pytest.mark.django_db
def test_the_owners_admin_pages_have_no_inline_script_or_style(
    client, owner, technician, work_order, oil_part
):
    """Every admin page the owner uses, for every model the admin shows: Django's admin is written
    for a strict policy, third-party admin templates (simple_history's) are not always."""
    from axes.models import AccessAttempt
    from django.contrib import admin
    from django.utils import timezone

    from shopdesk.documents.models import PrintBatch
    from tests.conftest import PASSWORD, finish_bench_work

    finish_bench_work(work_order, technician, oil_part)  # bench records, checks, stock movements
    PrintBatch.objects.create(
        created_at=timezone.now(), created_by=owner, numbers=[work_order.number], base_url="/", pdf=b"%PDF"
    )
    oil_part.name = "Test 5 wt oil, 1 L"
    oil_part.save()  # a second version in the part's history
    # A wrong password (a row in the sign-in lock list), then the owner's own sign-in.
    client.post(reverse("accounts:sign-in"), {"username": "desk", "password": "not-it"})
    client.post(reverse("accounts:sign-in"), {"username": "owner", "password": PASSWORD})
    assert AccessAttempt.objects.exists()

    urls = [
        reverse("admin:index"),
        reverse("admin:app_list", args=["stock"]),
        reverse("admin:password_change"),
        reverse("admin:auth_user_password_change", args=[owner.pk]),
    ]
    for model, model_admin in admin.site._registry.items():
        info = f"admin:{model._meta.app_label}_{model._meta.model_name}"
        urls.append(reverse(f"{info}_changelist"))
        if model_admin.has_add_permission(_owner_request(owner)):
            urls.append(reverse(f"{info}_add"))
        obj = model._default_manager.order_by("pk").first()
        if obj is not None:
            urls += [reverse(f"{info}_change", args=[obj.pk]), reverse(f"{info}_history", args=[obj.pk])]
            if model_admin.has_delete_permission(_owner_request(owner), obj):
                urls.append(reverse(f"{info}_delete", args=[obj.pk]))
    version = oil_part.history.order_by("history_id").first()
    urls.append(reverse("admin:stock_part_simple_history", args=[oil_part.pk, version.history_id]))
    # The pages that carried inline code before are among those tried.
    assert reverse("admin:stock_part_history", args=[oil_part.pk]) in urls
    assert reverse("admin:axes_accessattempt_changelist") in urls

    found = []
    for url in urls:
        response = client.get(url)
        assert response.status_code == 200, url
        found += [f"{url}: {what}" for what in _inline_code(response.content.decode())]
    assert not found, "\n".join(found)
    # The history list's count under the table keeps its look from the shop's admin style sheet.
    history = client.get(reverse("admin:stock_part_history", args=[oil_part.pk])).content.decode()
    assert '<p class="paginator">' in history and "/static/css/admin.css" in history


def _owner_request(owner):
    from django.test import RequestFactory

    request = RequestFactory().get("/admin/")
    request.user = owner
    return request
