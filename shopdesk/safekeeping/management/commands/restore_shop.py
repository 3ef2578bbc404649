import sys
from pathlib import Path

from django.core.management.base import BaseCommand, CommandError, CommandParser

from shopdesk.safekeeping.backup import BackupError, Target, restore


class Command(BaseCommand):
    help = "Replace everything in the database with the copy at PATH (made by backup_shop)."

    def add_arguments(self, parser: CommandParser) -> None:
        parser.add_argument("path", type=Path)
        parser.add_argument(
            "--database-url",
            help="Restore into this database instead (e.g. a scratch one, to check a backup).",
        )
        parser.add_argument(
            "--yes", action="store_true", help="Do not ask before replacing what the database holds."
        )

    def handle(
        self, *args: object, path: Path, database_url: str | None, yes: bool, **options: object
    ) -> None:
        def confirm(target: Target) -> None:
            if yes:
                return
            question = f"{target.name} holds {target.holds}; restoring {path} replaces all of it."
            # Run from cron or a script there is nobody to answer: say so rather than fail on input().
            if not sys.stdin.isatty():
                raise CommandError(f"{question} Nothing restored: run again with --yes to go on.")
            try:
                answer = input(f"{question} Type 'yes' to go on: ")
            except EOFError:
                answer = ""
            if answer.strip().lower() != "yes":
                raise CommandError("Nothing restored.")

        try:
            restored = restore(path, database_url=database_url, confirm=confirm)
        except BackupError as error:
            raise CommandError(str(error)) from error
        self.stdout.write(f"Restored ({restored.kind}) from {path} into {restored.into}.")
