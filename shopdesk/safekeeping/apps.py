from django.apps import AppConfig


class SafekeepingConfig(AppConfig):
    """Backups of the shop's database and the owner's download of everything as CSV files."""

    name = "shopdesk.safekeeping"
    verbose_name = "Safekeeping"
