"""The shop's three roles and the permissions each holds (see the role table in DEVELOPERS.md).

Views check permissions, never group names. Data migrations call :func:`sync_roles` so the
groups always hold exactly these permissions; add a migration that calls it again whenever a
permission is added here.
"""

from __future__ import annotations

from typing import Any

FRONT_DESK = "Front desk"
TECHNICIAN = "Bench technician"
OWNER = "Owner"

_VIEW_SPECS = [
    "specs.view_unitmodel",
    "specs.view_chamber",
    "specs.view_torquevalue",
    "specs.view_oil",
    "specs.view_servicetype",
    "specs.view_serviceinterval",
    "specs.view_stackpreset",
]

ROLE_PERMISSIONS: dict[str, list[str]] = {
    FRONT_DESK: [
        "customers.add_customer",
        "customers.change_customer",
        "customers.view_customer",
        "customers.add_unit",
        "customers.change_unit",
        "customers.view_unit",
        *_VIEW_SPECS,
        "workshop.view_workorder",
        *[
            f"workshop.view_{name}"
            for name in (
                "oilrecord",
                "springrecord",
                "partused",
                "labourentry",
                "finalcheck",
                "shimstackrecord",
            )
        ],
        "workshop.view_servicerecord",
        # Stock: what is on hand and its price, to answer a customer; not the ledger, never a change.
        "stock.view_part",
        "stock.view_stocklot",
        "workshop.check_in_workorder",
        "workshop.hand_back_workorder",
        "workshop.cancel_workorder",
        # Payment at hand-back: taken and seen; one taken in error is voided by the owner.
        "workshop.add_payment",
        "workshop.view_payment",
        # Paper: the job card at check-in, the customer's service report at pickup.
        "documents.print_job_card",
        "documents.print_service_report",
    ],
    TECHNICIAN: [
        "customers.view_customer",
        "customers.view_unit",
        *_VIEW_SPECS,
        "workshop.view_workorder",
        "workshop.move_on_bench_workorder",
        "workshop.view_servicerecord",
        # The bench's records: add and change (a wrong one is voided, never deleted).
        *[
            f"workshop.{action}_{name}"
            for name in (
                "oilrecord",
                "springrecord",
                "partused",
                "labourentry",
                "finalcheck",
                "shimstackrecord",
            )
            for action in ("add", "change", "view")
        ],
        # Stock: seen and used on jobs (through the bench's records), never adjusted or priced.
        "stock.view_part",
        "stock.view_stocklot",
        "stock.view_stockmovement",
        # The stack library: a technician saves a stack under a name; only the owner changes one.
        "specs.add_stackpreset",
        # Paper: job cards for the bench (the customer's report is the front desk's).
        "documents.print_job_card",
    ],
    # The owner holds every permission of the shop's own apps and of user management.
    OWNER: ["*"],
}

OWNER_APPS = (
    "auth",
    "customers",
    "specs",
    "stock",
    "workshop",
    "accounts",
    "shop",
    "owner",
    "documents",
    "safekeeping",
    "axes",  # the sign-in locks of django-axes: the owner sees and clears them
)


def sync_roles(apps: Any, schema_editor: Any = None) -> None:
    """Create the three groups and give each exactly its permissions. Safe to run again."""
    from django.contrib.auth.management import create_permissions
    from django.db import DEFAULT_DB_ALIAS

    # The database being migrated: `restore_shop --database-url` migrates another database than
    # the shop's own, and the roles belong in that one.
    using = schema_editor.connection.alias if schema_editor is not None else DEFAULT_DB_ALIAS
    for app_config in apps.get_app_configs():
        # Historical app configs have no models module; put back what was there, so that a call
        # with the live registry (tests after a flush) leaves dumpdata able to see the models.
        previous = getattr(app_config, "models_module", None)
        app_config.models_module = True
        create_permissions(app_config, apps=apps, verbosity=0, using=using)
        app_config.models_module = previous

    Group = apps.get_model("auth", "Group")
    Permission = apps.get_model("auth", "Permission")
    for role, names in ROLE_PERMISSIONS.items():
        group, _ = Group.objects.using(using).get_or_create(name=role)
        if names == ["*"]:
            permissions = list(Permission.objects.using(using).filter(content_type__app_label__in=OWNER_APPS))
        else:
            permissions = []
            for name in names:
                app_label, codename = name.split(".")
                permission = (
                    Permission.objects.using(using)
                    .filter(content_type__app_label=app_label, codename=codename)
                    .first()
                )
                # A permission of a model not migrated yet is picked up by a later sync.
                if permission is not None:
                    permissions.append(permission)
        group.permissions.set(permissions)
