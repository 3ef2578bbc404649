from django.contrib import admin

from shopdesk.documents.models import DocumentWording, PrintBatch


@admin.register(DocumentWording)
class DocumentWordingAdmin(admin.ModelAdmin):
    list_display = ("block", "text")


@admin.register(PrintBatch)
class PrintBatchAdmin(admin.ModelAdmin):
    list_display = ("created_at", "created_by", "state", "done_count")
    readonly_fields = [field.name for field in PrintBatch._meta.fields]

    def has_add_permission(self, request):  # type: ignore[no-untyped-def]
        return False  # batches are made from the print page
