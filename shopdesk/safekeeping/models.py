from django.db import models


class Export(models.Model):
    """No table: carries the permission to download everything the shop holds."""

    class Meta:
        managed = False
        default_permissions = ()
        permissions = [("export_everything", "Can download every record as CSV files")]

    def __str__(self) -> str:
        return "Export"
