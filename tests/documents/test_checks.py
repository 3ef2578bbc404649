"""The system check that tells a shop when PDFs will be slow for want of HarfBuzz's subsetter."""

from __future__ import annotations

import ctypes.util

from django.core import checks

from shopdesk.documents.checks import harfbuzz_subset_installed


def test_it_warns_with_the_package_to_install_when_the_subsetter_is_missing(monkeypatch) -> None:
    real = ctypes.util.find_library
    monkeypatch.setattr(
        ctypes.util, "find_library", lambda name: None if name == "harfbuzz-subset" else real(name)
    )
    [message] = harfbuzz_subset_installed()
    assert message.id == "documents.W001"
    assert message.level == checks.WARNING
    assert "apt-get install libharfbuzz-subset0" in message.hint


def test_it_is_quiet_when_the_subsetter_is_found(monkeypatch) -> None:
    monkeypatch.setattr(ctypes.util, "find_library", lambda name: f"lib{name}.so.0")
    assert harfbuzz_subset_installed() == []


def test_it_runs_with_django_s_own_checks(monkeypatch) -> None:
    monkeypatch.setattr(ctypes.util, "find_library", lambda name: None)
    assert "documents.W001" in [message.id for message in checks.run_checks()]
