from pathlib import Path

from django.core.management.base import BaseCommand, CommandError, CommandParser

from shopdesk.safekeeping.backup import KINDS, BackupError, backup


class Command(BaseCommand):
    help = "Write a consistent copy of the shop's database to PATH while the shop keeps running."

    def add_arguments(self, parser: CommandParser) -> None:
        parser.add_argument("path", type=Path)
        parser.add_argument(
            "--kind",
            choices=KINDS,
            help="Force a kind of copy (default: the database's own; xml where no tool is present).",
        )

    def handle(self, *args: object, path: Path, kind: str | None, **options: object) -> None:
        try:
            made = backup(path, kind=kind)
        except BackupError as error:
            raise CommandError(str(error)) from error
        self.stdout.write(f"Backed up ({made}) to {path} ({path.stat().st_size} bytes).")
