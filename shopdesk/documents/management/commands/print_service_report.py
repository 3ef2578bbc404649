from shopdesk.documents.management.commands._document_command import DocumentCommand


class Command(DocumentCommand):
    help = "Write the customer's service report of a job that is ready for pickup, as a PDF."
    kind = "service_report"
