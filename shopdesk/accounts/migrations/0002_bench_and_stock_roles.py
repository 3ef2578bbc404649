from django.db import migrations

from shopdesk.accounts.roles import sync_roles


class Migration(migrations.Migration):
    dependencies = [
        ("accounts", "0001_roles"),
        ("stock", "0001_initial"),
        ("workshop", "0002_historicalfinalcheck_historicallabourentry_and_more"),
    ]

    operations = [migrations.RunPython(sync_roles, migrations.RunPython.noop)]
