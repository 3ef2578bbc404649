from django.apps import AppConfig


class DocumentsConfig(AppConfig):
    name = "shopdesk.documents"
    verbose_name = "Printed documents"
