"""Everything the shop owns as a ZIP of CSV files, one per table.

Every model of the shop's own apps (``shopdesk.*``) is either in ``EXPORTED`` or in
``NOT_EXPORTED`` with the reason; tests/safekeeping/test_export.py fails for a model in neither.
The tables are read from one snapshot of the database, row by row, into a temporary file: a
large shop's export costs disk, not memory.
"""

from __future__ import annotations

import csv
import io
import json
import tempfile
import zipfile
from collections.abc import Callable, Iterable, Iterator, Sequence
from typing import IO, Any

from django.apps import apps
from django.contrib.auth import get_user_model
from django.contrib.auth.models import Group
from django.db import models
from django.db.models import Prefetch
from django.utils import timezone
from simple_history.exceptions import NotHistoricalModelError
from simple_history.utils import get_history_model_for_model

from shopdesk.safekeeping.snapshot import read_snapshot

# The shop's own records, in the order a reader would want them; after them, the history table
# of each that keeps one (every change, with who made it and when).
EXPORTED = [
    # Spec sheets and prices: what the owner keeps in the admin.
    "specs.Oil",
    "specs.ServiceType",
    "specs.UnitModel",
    "specs.Chamber",
    "specs.TorqueValue",
    "specs.ServiceInterval",
    "specs.StackPreset",
    # The front desk.
    "customers.Customer",
    "customers.Unit",
    # Jobs and the bench's records.
    "workshop.WorkOrder",
    "workshop.ArrivalSettings",
    "workshop.RequestedService",
    "workshop.WorkOrderEvent",
    "workshop.OilRecord",
    "workshop.SpringRecord",
    "workshop.PartUsed",
    "workshop.LabourEntry",
    "workshop.FinalCheck",
    "workshop.ShimStackRecord",
    "workshop.ServiceRecord",
    "workshop.Payment",
    # Stock.
    "stock.Part",
    "stock.StockLot",
    "stock.StockMovement",
    # The owner's: reminders sent, their wording, the wording on the customer's report.
    # The due table is worked out from the service history and the intervals (and rebuilt by
    # owner.services.due_refresh_all), but it is the shop's list of who is due when, readable
    # here without the app's rules, so it goes too.
    "owner.DueService",
    "owner.Reminder",
    "owner.MessageWording",
    "documents.DocumentWording",
]

# Models of the shop's own apps that are not the shop's data, and why.
NOT_EXPORTED = {
    "documents.PrintBatch": "printed paper: a batch of job cards as a PDF, removed after 30 days; "
    "the jobs it printed are exported and print again",
    "workshop.NumberSequence": "the counter that hands out job numbers: each year's last number "
    "is the highest job number of that year in the jobs",
    "safekeeping.Export": "no table: it only carries the permission to download this export",
}

# Who did what: the other files name people by user id. Names, groups and whether the account is
# active, never the password's hash or anything else of the account.
USERS_FILE = "users.csv"
USER_COLUMNS = ["id", "username", "first_name", "last_name", "groups", "is_active"]

CHUNK = 2000  # rows read at a time


def exported_models() -> list[type[models.Model]]:
    """The models in ``EXPORTED``, then their history models. A label that names no model is an
    error, not skipped: an export that silently leaves out a table is the loss it is there to prevent."""
    chosen = []
    for label in EXPORTED:
        try:
            chosen.append(apps.get_model(label))
        except (LookupError, ValueError) as error:
            raise LookupError(
                f"shopdesk.safekeeping.export.EXPORTED names {label!r}, which is no model ({error})."
            ) from None
    histories = []
    for model in chosen:
        try:
            histories.append(get_history_model_for_model(model))
        except NotHistoricalModelError:
            continue
    return chosen + histories


def _converters(fields: list[models.Field]) -> list[tuple[int, Callable[[Any], Any]]]:
    """Per column, what turns a stored value into what the CSV shows, for the columns that need it.

    The csv module writes None as an empty cell and the rest with str(); only JSON (Python's repr
    is not JSON) and moments in time (stored in UTC) are turned, once per column rather than
    asking each cell what it is: a large shop's export is a million cells."""
    shop_clock = timezone.get_current_timezone()
    turned: list[tuple[int, Callable[[Any], Any]]] = []
    for column, field in enumerate(fields):
        if isinstance(field, models.JSONField):
            turned.append((column, lambda value: json.dumps(value, ensure_ascii=False)))
        elif isinstance(field, models.DateTimeField):
            # The shop's clock, with its offset: readable, and still one moment.
            turned.append((column, lambda value: value.astimezone(shop_clock).isoformat(sep=" ")))
    return turned


def _write_csv(archive: zipfile.ZipFile, name: str, header: list[str], rows: Iterable[Iterable[Any]]) -> str:
    # Straight into the archive, a row at a time: no table is held whole in memory.
    with io.TextIOWrapper(archive.open(name, "w"), encoding="utf-8", newline="") as text:
        writer = csv.writer(text)
        writer.writerow(header)
        writer.writerows(rows)
    return name


def _user_rows() -> Iterator[list[Any]]:
    users = (
        get_user_model()
        ._base_manager.order_by("pk")
        .only(*[column for column in USER_COLUMNS if column != "groups"])  # the hash is never read
        .prefetch_related(Prefetch("groups", queryset=Group.objects.order_by("name")))
    )
    for user in users.iterator(chunk_size=CHUNK):
        yield [
            user.pk,
            user.username,
            user.first_name,
            user.last_name,
            "; ".join(group.name for group in user.groups.all()),
            user.is_active,
        ]


def _model_rows(model: type[models.Model], fields: list[models.Field]) -> Iterator[Sequence[Any]]:
    rows = (
        model._base_manager.order_by("pk")
        .values_list(*[field.attname for field in fields])
        .iterator(chunk_size=CHUNK)
    )
    turned = _converters(fields)
    if not turned:
        yield from rows
        return
    for row in rows:
        cells = list(row)
        for column, turn in turned:
            if cells[column] is not None:
                cells[column] = turn(cells[column])
        yield cells


def write_zip(out: IO[bytes]) -> list[str]:
    """Write the ZIP to ``out``; returns the names of the CSV files in it."""
    names = []
    with read_snapshot(), zipfile.ZipFile(out, "w", compression=zipfile.ZIP_DEFLATED) as archive:
        names.append(_write_csv(archive, USERS_FILE, USER_COLUMNS, _user_rows()))
        for model in exported_models():
            fields = list(model._meta.concrete_fields)
            names.append(
                _write_csv(
                    archive,
                    f"{model._meta.db_table}.csv",
                    [field.attname for field in fields],
                    _model_rows(model, fields),
                )
            )
    return names


def zip_file() -> IO[bytes]:
    """The ZIP in a temporary file (gone when closed), read from its start. Raises OSError when
    the server's temporary folder cannot take it (a full disk)."""
    file = tempfile.TemporaryFile()  # noqa: SIM115 -- handed to the response, which closes it
    try:
        write_zip(file)
        file.seek(0)
    except BaseException:
        file.close()
        raise
    return file
