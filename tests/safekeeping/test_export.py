"""The owner's download of every record as CSV files in a ZIP."""

from __future__ import annotations

import csv
import datetime
import io
import json
import zipfile
from io import BytesIO
from typing import Any

import pytest
from django.apps import apps
from django.contrib.auth.models import User
from django.db import models
from django.urls import reverse

from shopdesk.safekeeping import export


def _unaccounted() -> list[str]:
    """Models of the shop's own apps that are neither exported nor left out with a reason."""
    exported = {model._meta.label for model in export.exported_models()}
    return sorted(
        model._meta.label
        for model in apps.get_models(include_auto_created=True)
        if model._meta.app_config.name.startswith("shopdesk.")
        and model._meta.label not in exported
        and model._meta.label not in export.NOT_EXPORTED
    )


def test_every_model_of_the_shops_apps_is_exported_or_left_out_with_a_reason(monkeypatch) -> None:
    assert _unaccounted() == []
    assert len(export.EXPORTED) == len(set(export.EXPORTED))
    for label, reason in export.NOT_EXPORTED.items():
        apps.get_model(label)  # no stale name
        assert label not in export.EXPORTED and len(reason) > 20, label
    # History tables come with their model: every model that keeps a history has it exported.
    assert "workshop.HistoricalOilRecord" in {model._meta.label for model in export.exported_models()}
    # The walk finds a model that nobody listed.
    monkeypatch.setattr(export, "EXPORTED", [label for label in export.EXPORTED if label != "specs.Oil"])
    assert _unaccounted() == ["specs.Oil"]


def test_a_label_that_names_no_model_is_an_error_not_skipped(monkeypatch) -> None:
    monkeypatch.setattr(export, "EXPORTED", [*export.EXPORTED, "specs.Oli"])
    with pytest.raises(LookupError, match=r"EXPORTED names 'specs\.Oli', which is no model"):
        export.exported_models()


def _read(archive: zipfile.ZipFile, name: str) -> list[list[str]]:
    with io.TextIOWrapper(archive.open(name), encoding="utf-8", newline="") as text:
        return list(csv.reader(text))


def _parsed(field: models.Field, text: str) -> Any:
    """A cell read back into the field's Python value, the way a reader of the CSV would."""
    if text == "" and field.null:
        return None
    if isinstance(field, models.JSONField):
        return json.loads(text)
    if isinstance(field, models.DateTimeField):
        return datetime.datetime.fromisoformat(text)
    if isinstance(field, models.BooleanField):
        return {"True": True, "False": False}[text]
    return field.to_python(text)


@pytest.mark.django_db(transaction=True)  # the export reads through its own snapshot transaction
def test_the_zip_holds_every_row_of_every_exported_table(whole_shop) -> None:
    out = BytesIO()
    names = export.write_zip(out)
    archive = zipfile.ZipFile(out)
    chosen = export.exported_models()
    assert sorted(archive.namelist()) == sorted(names)
    assert sorted(names) == sorted([export.USERS_FILE, *[f"{model._meta.db_table}.csv" for model in chosen]])
    for model in chosen:
        fields = list(model._meta.concrete_fields)
        header, *rows = _read(archive, f"{model._meta.db_table}.csv")
        assert header == [field.attname for field in fields], model
        stored = list(model._base_manager.order_by("pk").values_list(*header))
        assert stored, f"{model._meta.label}: the small shop has no row to compare"
        read_back = [
            tuple(_parsed(field, cell) for field, cell in zip(fields, row, strict=True)) for row in rows
        ]
        assert read_back == stored, model._meta.label


@pytest.mark.django_db
def test_the_stack_is_json_and_times_are_the_shops_clock(work_order, technician) -> None:
    from django.utils import timezone

    from shopdesk.workshop.services.revalve import shim_stack_save

    shims = [{"od": 20.0, "thickness": 0.15, "count": 3}, {"od": 18.0, "thickness": 0.1, "count": 1}]
    shim_stack_save(
        work_order=work_order,
        valve="rebound",
        stage="before",
        by=technician,
        values={"clamp_mm": 8.0, "preload_n": 0.0, "shims": shims},
    )
    out = BytesIO()
    export.write_zip(out)
    archive = zipfile.ZipFile(out)
    header, row = _read(archive, "workshop_shimstackrecord.csv")
    assert json.loads(row[header.index("shims")]) == shims
    header, row = _read(archive, "workshop_workorder.csv")
    shown = timezone.localtime(work_order.checked_in_at).isoformat(sep=" ")
    assert row[header.index("checked_in_at")] == shown
    assert row[header.index("number")] == work_order.number


@pytest.mark.django_db
def test_users_are_names_groups_and_active_never_a_password(role_users) -> None:
    quiet = User.objects.create_user(
        "former", password="another-long-pass-41", first_name="Fen", is_active=False
    )
    out = BytesIO()
    export.write_zip(out)
    archive = zipfile.ZipFile(out)
    header, *rows = _read(archive, export.USERS_FILE)
    assert header == ["id", "username", "first_name", "last_name", "groups", "is_active"]
    owner, desk, bench = role_users["owner"], role_users["front_desk"], role_users["technician"]
    assert sorted(rows) == sorted(
        [
            [str(desk.pk), "desk", "Desk", "", "Front desk", "True"],
            [str(bench.pk), "bench", "Bench", "", "Bench technician", "True"],
            [str(owner.pk), "owner", "Owner", "", "Owner", "True"],
            [str(quiet.pk), "former", "Fen", "", "", "False"],
        ]
    )
    everything = b"".join(archive.read(name) for name in archive.namelist())
    for user in User.objects.all():
        assert user.password.encode() not in everything
    assert b"pbkdf2" not in everything


@pytest.mark.django_db
def test_the_owner_downloads_everything_as_csv_files(client, role_users, work_order) -> None:
    url = reverse("safekeeping:export")
    for role in ("front_desk", "technician"):
        client.force_login(role_users[role])
        assert client.get(url).status_code == 403, role
    client.force_login(role_users["owner"])
    assert f'href="{url}"' in client.get(reverse("owner:dashboard")).content.decode()  # found from there
    response = client.get(url)
    assert response.status_code == 200
    assert response["Content-Type"] == "application/zip"
    assert response["Content-Disposition"].startswith('attachment; filename="shopdesk-')
    archive = zipfile.ZipFile(BytesIO(b"".join(response.streaming_content)))
    names = set(archive.namelist())
    assert {
        "users.csv",
        "specs_unitmodel.csv",
        "specs_servicetype.csv",
        "workshop_arrivalsettings.csv",
    } <= names
    jobs = _read(archive, "workshop_workorder.csv")
    assert len(jobs) == 2 and work_order.number in jobs[1]
    prices = _read(archive, "specs_servicetype.csv")
    assert [row[prices[0].index("price")] for row in prices[1:]] == ["45.00", "89.50"]


class _FullDisk(io.BytesIO):
    """A temporary file on a disk that fills after a few kilobytes."""

    made: list[_FullDisk] = []

    def __init__(self) -> None:
        super().__init__()
        self.made.append(self)

    def write(self, data: Any) -> int:
        if self.tell() + len(data) > 4096:
            raise OSError(28, "No space left on device")
        return super().write(data)


@pytest.mark.django_db
def test_a_full_disk_gives_the_owner_a_page_saying_so(client, owner, work_order, monkeypatch) -> None:
    monkeypatch.setattr(export.tempfile, "TemporaryFile", _FullDisk)
    client.force_login(owner)
    response = client.get(reverse("safekeeping:export"))
    assert response.status_code == 503
    page = response.content.decode()
    assert "No space left on device" in page and "Nothing in the shop was changed" in page
    assert _FullDisk.made and all(file.closed for file in _FullDisk.made)  # nothing left open
