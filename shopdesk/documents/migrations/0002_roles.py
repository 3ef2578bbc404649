from django.db import migrations

from shopdesk.accounts.roles import sync_roles


class Migration(migrations.Migration):
    dependencies = [
        ("documents", "0001_initial"),
        ("accounts", "0003_shim_stack_roles"),
        ("owner", "0002_roles"),
    ]

    operations = [migrations.RunPython(sync_roles, migrations.RunPython.noop)]
