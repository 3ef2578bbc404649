from django.apps import AppConfig


class OwnerConfig(AppConfig):
    default_auto_field = "django.db.models.BigAutoField"
    name = "shopdesk.owner"
    label = "owner"
    verbose_name = "Owner"
