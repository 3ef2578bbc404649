"""System checks for printed documents."""

from __future__ import annotations

import ctypes.util
from typing import Any

from django.core.checks import CheckMessage, Tags, Warning, register

# WeasyPrint embeds a subset of each font in every PDF. With HarfBuzz's subsetter (the system
# library) that takes a few milliseconds; without it WeasyPrint falls back to fontTools in
# Python, which took about 200 ms of the ~300 ms a job card cost here, and logs a warning on
# every document.
HARFBUZZ_SUBSET = "harfbuzz-subset"


def harfbuzz_subset_found() -> bool:
    return ctypes.util.find_library(HARFBUZZ_SUBSET) is not None


@register(Tags.compatibility)
def harfbuzz_subset_installed(app_configs: Any = None, **kwargs: Any) -> list[CheckMessage]:
    if harfbuzz_subset_found():
        return []
    return [
        Warning(
            "HarfBuzz's font subsetter (libharfbuzz-subset) is not installed: every PDF takes "
            "about three times as long to make, and WeasyPrint logs a warning for each one.",
            hint="Install it with the system's package manager: apt-get install libharfbuzz-subset0",
            id="documents.W001",
        )
    ]
