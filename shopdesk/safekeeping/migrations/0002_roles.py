from django.db import migrations

from shopdesk.accounts.roles import sync_roles


class Migration(migrations.Migration):
    dependencies = [("safekeeping", "0001_initial"), ("accounts", "0002_bench_and_stock_roles")]

    operations = [migrations.RunPython(sync_roles, migrations.RunPython.noop)]
