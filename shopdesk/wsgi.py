"""The WSGI application (gunicorn in a shop).

Everything a worker keeps for its whole life (Django, every view's modules, WeasyPrint) is
loaded here, before the first request, and then frozen out of the garbage collector's way
(``gc.freeze``). Without that, each full collection walked those ~190,000 objects again: about
45 ms, which landed on one job card in five and set the load test's p99.
"""

import contextlib
import gc
import os

from django.core.wsgi import get_wsgi_application

os.environ.setdefault("DJANGO_SETTINGS_MODULE", "shopdesk.settings")
application = get_wsgi_application()


def _load_for_good() -> None:
    from django.urls import get_resolver

    get_resolver().url_patterns  # noqa: B018  (imports every view, and with them the calculators)
    with contextlib.suppress(OSError):  # no Pango here: the pages still work, a PDF says what is missing
        import weasyprint  # noqa: F401  (the job card's renderer, otherwise loaded by the first PDF)
    gc.freeze()


_load_for_good()
