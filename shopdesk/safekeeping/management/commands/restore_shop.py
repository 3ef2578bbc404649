from pathlib import Path

from django.core.management.base import BaseCommand, CommandError, CommandParser

from shopdesk.safekeeping.backup import BackupError, restore


class Command(BaseCommand):
    help = "Replace everything in the database with the copy at PATH (made by backup_shop)."

    def add_arguments(self, parser: CommandParser) -> None:
        parser.add_argument("path", type=Path)
        parser.add_argument(
            "--database-url",
            help="Restore into this database instead (e.g. a scratch one, to check a backup).",
        )
        parser.add_argument("--yes", action="store_true", help="Do not ask before replacing.")

    def handle(
        self, *args: object, path: Path, database_url: str | None, yes: bool, **options: object
    ) -> None:
        if not yes:
            answer = input("Everything in the target database will be replaced. Type 'yes' to go on: ")
            if answer.strip().lower() != "yes":
                raise CommandError("Nothing restored.")
        try:
            restored = restore(path, database_url=database_url)
        except BackupError as error:
            raise CommandError(str(error)) from error
        self.stdout.write(f"Restored ({restored.kind}) from {path} into {restored.into}.")
