from django.apps import AppConfig


class DocumentsConfig(AppConfig):
    name = "shopdesk.documents"
    verbose_name = "Printed documents"

    def ready(self) -> None:
        from shopdesk.documents import checks  # noqa: F401  (registers the system checks)
