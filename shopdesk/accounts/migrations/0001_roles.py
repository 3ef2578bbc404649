from django.db import migrations

from shopdesk.accounts.roles import sync_roles


class Migration(migrations.Migration):
    dependencies = [
        ("auth", "0012_alter_user_first_name_max_length"),
        ("contenttypes", "0002_remove_content_type_name"),
        ("customers", "0001_initial"),
        ("specs", "0001_initial"),
        ("workshop", "0001_initial"),
    ]

    operations = [migrations.RunPython(sync_roles, migrations.RunPython.noop)]
