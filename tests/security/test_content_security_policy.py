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
