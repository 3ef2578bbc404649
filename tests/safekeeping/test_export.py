"""The owner's download of every record as CSV files in a ZIP."""

from __future__ import annotations

import zipfile
from io import BytesIO

import pytest
from django.urls import reverse


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
    archive = zipfile.ZipFile(BytesIO(response.content))
    names = set(archive.namelist())
    assert {
        "customers_customer.csv",
        "customers_unit.csv",
        "workshop_workorder.csv",
        "workshop_oilrecord.csv",
        "workshop_partused.csv",
        "stock_part.csv",
    } <= names
    jobs = archive.read("workshop_workorder.csv").decode().splitlines()
    assert len(jobs) == 2 and work_order.number in jobs[1]
