#!/usr/bin/env python
import os
import sys


def main() -> None:
    os.environ.setdefault("DJANGO_SETTINGS_MODULE", "shopdesk.settings")
    from django.conf import settings
    from django.core.exceptions import ImproperlyConfigured
    from django.core.management import execute_from_command_line

    try:
        settings.INSTALLED_APPS  # noqa: B018  (reads the settings, which check the environment)
    except ImproperlyConfigured as error:
        # A variable missing or wrong: its message says which and what to do; a traceback would
        # only bury it.
        sys.exit(f"ShopDesk cannot start: {error}")
    execute_from_command_line(sys.argv)


if __name__ == "__main__":
    main()
