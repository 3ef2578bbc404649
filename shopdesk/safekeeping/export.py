"""Everything the shop owns as a ZIP of CSV files, one per table."""

from __future__ import annotations

import csv
import io
import zipfile

from django.apps import apps
from django.db import models

# The shop's own records, in the order a reader would want them; history tables follow.
EXPORTED = [
    "customers.Customer",
    "customers.Unit",
    "workshop.WorkOrder",
    "workshop.RequestedService",
    "workshop.WorkOrderEvent",
    "workshop.OilRecord",
    "workshop.SpringRecord",
    "workshop.PartUsed",
    "workshop.LabourEntry",
    "workshop.FinalCheck",
    "workshop.ShimStackRecord",
    "workshop.ServiceRecord",
    "stock.Part",
    "stock.StockLot",
    "stock.StockMovement",
]


def exported_models() -> list[type[models.Model]]:
    chosen = []
    for label in EXPORTED:
        try:
            chosen.append(apps.get_model(label))
        except LookupError:
            continue
    # Every change kept by django-simple-history: the models' history tables.
    for model in list(chosen):
        history = getattr(model, "history", None)
        if history is not None:
            chosen.append(history.model)
    return chosen


def _cell(value: object) -> object:
    return "" if value is None else value


def write_zip(out: io.IOBase) -> list[str]:
    """Write the ZIP to ``out``; returns the names of the CSV files in it."""
    names = []
    with zipfile.ZipFile(out, "w", compression=zipfile.ZIP_DEFLATED) as archive:
        for model in exported_models():
            fields = [field for field in model._meta.concrete_fields]
            name = f"{model._meta.db_table}.csv"
            text = io.StringIO()
            writer = csv.writer(text)
            writer.writerow([field.attname for field in fields])
            for row in (
                model._base_manager.order_by("pk")
                .values_list(*[field.attname for field in fields])
                .iterator(chunk_size=2000)
            ):
                writer.writerow([_cell(value) for value in row])
            archive.writestr(name, text.getvalue())
            names.append(name)
    return names
