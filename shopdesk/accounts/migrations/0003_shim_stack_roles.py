from django.db import migrations

from shopdesk.accounts.roles import sync_roles


class Migration(migrations.Migration):
    dependencies = [
        ("accounts", "0002_bench_and_stock_roles"),
        ("specs", "0002_stackpreset"),
        ("workshop", "0003_historicalshimstackrecord_shimstackrecord"),
    ]

    operations = [migrations.RunPython(sync_roles, migrations.RunPython.noop)]
