from django.apps import AppConfig


class WorkshopConfig(AppConfig):
    name = "shopdesk.workshop"
    verbose_name = "Workshop"
