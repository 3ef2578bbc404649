from django.apps import AppConfig


class SpecsConfig(AppConfig):
    name = "shopdesk.specs"
    verbose_name = "Spec sheets"
