from shopdesk.documents.management.commands._document_command import DocumentCommand


class Command(DocumentCommand):
    help = "Write a job's job card as a PDF."
    kind = "job_card"
