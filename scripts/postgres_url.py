"""Print the PostgreSQL URL the test suite's second pass should use, or nothing if none is reachable.

TEST_DATABASE_URL wins; otherwise the local server at 127.0.0.1:5432 (user postgres, trust auth).
Exit status 0 when reachable, 1 when not (the reason goes to standard error).
"""

import os
import sys

url = os.environ.get("TEST_DATABASE_URL") or "postgres://postgres@127.0.0.1:5432/shopdesk"
try:
    import dj_database_url
    import psycopg

    config = dj_database_url.parse(url)
    with psycopg.connect(
        host=config["HOST"] or "127.0.0.1",
        port=config["PORT"] or 5432,
        user=config["USER"] or "postgres",
        password=config["PASSWORD"] or None,
        dbname="postgres",
        connect_timeout=3,
    ):
        pass
except Exception as error:  # any failure means "no PostgreSQL here"; say which
    print(f"PostgreSQL not reachable at {url}: {error}", file=sys.stderr)
    sys.exit(1)
print(url)
