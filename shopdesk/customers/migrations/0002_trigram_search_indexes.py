"""On PostgreSQL, trigram indexes make the front desk's "contains" search use an index.

Django's ``icontains`` becomes ``UPPER(col) LIKE UPPER('%…%')``; a GIN index over
``UPPER(col) gin_trgm_ops`` serves it. SQLite has no such index and scans, which is fast enough
at a shop's size. Where the database user may not create the extension, the search still works,
unindexed, and the migration says so.
"""

from django.db import migrations

INDEXES = [
    ("customer_name_trgm", "customers_customer", "UPPER(name)"),
    ("customer_email_trgm", "customers_customer", "UPPER(email)"),
    ("customer_phone_trgm", "customers_customer", "phone_digits"),
    ("unit_serial_trgm", "customers_unit", "UPPER(serial_number)"),
]


def create(apps, schema_editor):
    if schema_editor.connection.vendor != "postgresql":
        return
    from django.db import transaction

    try:
        # On the database being migrated (restore_shop migrates other databases than the default).
        with transaction.atomic(using=schema_editor.connection.alias):
            schema_editor.execute("CREATE EXTENSION IF NOT EXISTS pg_trgm")
    except Exception as error:  # a user without the right to create extensions
        print(f"\n  Trigram search indexes skipped: {error}")
        return
    for name, table, expression in INDEXES:
        schema_editor.execute(
            f"CREATE INDEX IF NOT EXISTS {name} ON {table} USING gin (({expression}) gin_trgm_ops)"
        )


def drop(apps, schema_editor):
    if schema_editor.connection.vendor != "postgresql":
        return
    for name, _, _ in INDEXES:
        schema_editor.execute(f"DROP INDEX IF EXISTS {name}")


class Migration(migrations.Migration):
    dependencies = [("customers", "0001_initial")]

    operations = [migrations.RunPython(create, drop)]
