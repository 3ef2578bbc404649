from django.db import migrations

from shopdesk.accounts.roles import sync_roles


class Migration(migrations.Migration):
    dependencies = [
        ("accounts", "0003_shim_stack_roles"),
        ("workshop", "0004_payments"),
    ]

    operations = [migrations.RunPython(sync_roles, migrations.RunPython.noop)]
