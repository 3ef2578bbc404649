from django.db import migrations

from shopdesk.accounts.roles import sync_roles


class Migration(migrations.Migration):
    """The owner may see and clear sign-in locks (django-axes) in the admin."""

    dependencies = [("safekeeping", "0002_roles"), ("axes", "0010_accessattemptexpiration")]

    operations = [migrations.RunPython(sync_roles, migrations.RunPython.noop)]
