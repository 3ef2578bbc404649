from django.apps import AppConfig


class CalculatorsConfig(AppConfig):
    """The bench's calculator page: forms over ``shopdesk.calc``, no models of its own."""

    name = "shopdesk.calculators"
    verbose_name = "Calculators"
