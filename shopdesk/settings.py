"""ShopDesk settings: one module, configured from the environment.

``DEBUG`` is off unless the environment turns it on, so a server started without
its settings is a production server: it refuses to start without ``SECRET_KEY``
and never shows Django's debug pages. ``make run`` sets ``DEBUG=true``, and the
test commands' ``SHOPDESK_TESTING=true`` implies it; then every other variable is
optional. A value that cannot be read stops start-up with a message naming the
variable.
"""

from __future__ import annotations

import os
from decimal import Decimal, InvalidOperation
from pathlib import Path

import dj_database_url
from django.core.exceptions import ImproperlyConfigured

BASE_DIR = Path(__file__).resolve().parent.parent


def env_str(name: str, default: str | None = None) -> str:
    # An empty variable counts as unset, so that `DATABASE_URL= make test` takes the default.
    value = os.environ.get(name) or default
    if value is None:
        raise ImproperlyConfigured(f"Set the environment variable {name}.")
    return value


def env_bool(name: str, default: bool) -> bool:
    raw = os.environ.get(name)
    if raw is None or raw == "":
        return default
    lowered = raw.strip().lower()
    if lowered in {"1", "true", "yes", "on"}:
        return True
    if lowered in {"0", "false", "no", "off"}:
        return False
    raise ImproperlyConfigured(f"{name} must be true or false, not {raw!r}.")


def env_list(name: str, default: str) -> list[str]:
    return [item.strip() for item in env_str(name, default).split(",") if item.strip()]


def env_choice(name: str, default: str, choices: tuple[str, ...]) -> str:
    value = env_str(name, default)
    if value not in choices:
        raise ImproperlyConfigured(f"{name} must be one of {', '.join(choices)}, not {value!r}.")
    return value


def env_int(name: str, default: str, *, minimum: int, maximum: int) -> int:
    raw = env_str(name, default)
    try:
        value = int(raw)
    except ValueError:
        raise ImproperlyConfigured(f"{name} must be a whole number, not {raw!r}.") from None
    if not (minimum <= value <= maximum):
        raise ImproperlyConfigured(f"{name} must be between {minimum} and {maximum}, not {raw}.")
    return value


def env_decimal(name: str, default: str, *, minimum: Decimal, maximum: Decimal) -> Decimal:
    raw = env_str(name, default)
    try:
        value = Decimal(raw)
    except InvalidOperation:
        raise ImproperlyConfigured(f"{name} must be a number, not {raw!r}.") from None
    if not (minimum <= value <= maximum):
        raise ImproperlyConfigured(f"{name} must be between {minimum} and {maximum}, not {raw}.")
    return value


TESTING = env_bool("SHOPDESK_TESTING", False)
# Off by default: a gunicorn started without the environment must not show stack traces. The
# tests run with the development defaults, as they always have (Django's test runner turns DEBUG
# itself off while they run).
DEBUG = env_bool("DEBUG", TESTING)

if DEBUG:
    # Only for a developer's own machine; refused below when DEBUG is off.
    SECRET_KEY = env_str("SECRET_KEY", "insecure-development-key-do-not-use-in-a-shop")
else:
    SECRET_KEY = os.environ.get("SECRET_KEY", "")
    if not SECRET_KEY:
        raise ImproperlyConfigured(
            "SECRET_KEY is not set. DEBUG is off (it is unless set), so this is a shop's server: set "
            "SECRET_KEY to a random string of at least 50 characters, or DEBUG=true on a developer's "
            "own machine."
        )
    if len(SECRET_KEY) < 50 or SECRET_KEY.startswith("insecure"):
        raise ImproperlyConfigured("SECRET_KEY must be a random string of at least 50 characters.")

ALLOWED_HOSTS = env_list("ALLOWED_HOSTS", "127.0.0.1,localhost" if DEBUG else "")
CSRF_TRUSTED_ORIGINS = env_list("CSRF_TRUSTED_ORIGINS", "")

INSTALLED_APPS = [
    "django.contrib.admin",
    "django.contrib.auth",
    "django.contrib.contenttypes",
    "django.contrib.sessions",
    "django.contrib.messages",
    "whitenoise.runserver_nostatic",
    "django.contrib.staticfiles",
    "django.contrib.humanize",
    "django_htmx",
    "template_partials",
    "simple_history",
    "shopdesk.shop",
    "shopdesk.accounts",
    "shopdesk.specs",
    "shopdesk.customers",
    "shopdesk.stock",
    "shopdesk.workshop",
    "shopdesk.calculators",
    "shopdesk.documents",
    "shopdesk.owner",
    "shopdesk.safekeeping",
    "axes",
    "csp",
]

MIDDLEWARE = [
    "django.middleware.security.SecurityMiddleware",
    "csp.middleware.CSPMiddleware",
    "whitenoise.middleware.WhiteNoiseMiddleware",
    "django.contrib.sessions.middleware.SessionMiddleware",
    "shopdesk.accounts.middleware.session_refresh",  # moves a session's expiry on, once a minute
    "django.middleware.common.CommonMiddleware",
    "django.middleware.csrf.CsrfViewMiddleware",
    "django.contrib.auth.middleware.AuthenticationMiddleware",
    "django.contrib.auth.middleware.LoginRequiredMiddleware",
    "django.contrib.messages.middleware.MessageMiddleware",
    "django.middleware.clickjacking.XFrameOptionsMiddleware",
    "django_htmx.middleware.HtmxMiddleware",
    "simple_history.middleware.HistoryRequestMiddleware",
    # Last, as django-axes asks: it turns a locked-out sign-in into the sign-in page's message.
    "axes.middleware.AxesMiddleware",
]

ROOT_URLCONF = "shopdesk.urls"
WSGI_APPLICATION = "shopdesk.wsgi.application"

TEMPLATES = [
    {
        "BACKEND": "django.template.backends.django.DjangoTemplates",
        "DIRS": [BASE_DIR / "templates"],
        "APP_DIRS": True,
        "OPTIONS": {
            "context_processors": [
                "django.template.context_processors.request",
                "django.contrib.auth.context_processors.auth",
                "django.contrib.messages.context_processors.messages",
                "shopdesk.shop.context_processors.shop",
            ],
            "builtins": ["template_partials.templatetags.partials"],
        },
    }
]

# Form fields are drawn from Django's own form templates by Jinja2 (shopdesk/shop/form_renderer.py).
FORM_RENDERER = "shopdesk.shop.form_renderer.ShopFormRenderer"

DATABASES = {
    "default": dj_database_url.parse(
        env_str("DATABASE_URL", f"sqlite:///{BASE_DIR / 'shopdesk.sqlite3'}"),
        conn_max_age=env_int("DATABASE_CONN_MAX_AGE", "0", minimum=0, maximum=86400),
    )
}
if DATABASES["default"]["ENGINE"] == "django.db.backends.postgresql" and env_bool(
    "DATABASE_PREPARED_STATEMENTS", True
):
    # Parameters sent apart from the SQL, and a query PostgreSQL has seen five times on a
    # connection kept open (DATABASE_CONN_MAX_AGE) is planned once and kept. Planning the pages'
    # joins was about a third of the database's work: under the load test this took its CPU from
    # 36 to 26 % of a core and added 9 % to the requests served. Set the variable to false behind
    # a connection pooler that shares one server connection between clients per transaction.
    DATABASES["default"].setdefault("OPTIONS", {}).update(
        {"server_side_binding": True, "prepare_threshold": 5}
    )
if DATABASES["default"]["ENGINE"] == "django.db.backends.sqlite3":
    # Several app processes may share the file: wait for a lock rather than fail at once,
    # and take the write lock at the start of a transaction so that reads inside it stay valid.
    DATABASES["default"].setdefault("OPTIONS", {}).update(
        {
            "timeout": 20,
            "transaction_mode": "IMMEDIATE",
            "init_command": "PRAGMA journal_mode=WAL; PRAGMA synchronous=NORMAL;",
        }
    )

DEFAULT_AUTO_FIELD = "django.db.models.BigAutoField"

AUTH_PASSWORD_VALIDATORS = [
    {"NAME": "django.contrib.auth.password_validation.UserAttributeSimilarityValidator"},
    {"NAME": "django.contrib.auth.password_validation.MinimumLengthValidator", "OPTIONS": {"min_length": 12}},
    {"NAME": "django.contrib.auth.password_validation.CommonPasswordValidator"},
    {"NAME": "django.contrib.auth.password_validation.NumericPasswordValidator"},
]

LOGIN_URL = "accounts:sign-in"
LOGIN_REDIRECT_URL = "shop:home"
LOGOUT_REDIRECT_URL = "accounts:sign-in"

LANGUAGE_CODE = "en-gb"
TIME_ZONE = env_str("TIME_ZONE", "Europe/London")
USE_I18N = True
USE_TZ = True

STATIC_URL = "static/"
STATIC_ROOT = Path(env_str("STATIC_ROOT", str(BASE_DIR / "staticfiles")))  # collectstatic writes here
STATICFILES_DIRS = [BASE_DIR / "static"]
STORAGES = {
    "default": {"BACKEND": "django.core.files.storage.FileSystemStorage"},
    "staticfiles": {
        "BACKEND": (
            "django.contrib.staticfiles.storage.StaticFilesStorage"
            if DEBUG or TESTING
            else "whitenoise.storage.CompressedManifestStaticFilesStorage"
        )
    },
}

EMAIL_BACKEND = env_str("EMAIL_BACKEND", "django.core.mail.backends.console.EmailBackend")
DEFAULT_FROM_EMAIL = env_str("DEFAULT_FROM_EMAIL", "workshop@shop.example")

SESSION_COOKIE_AGE = 10 * 60 * 60  # a working day of idleness ends a session
SESSION_SAVE_EVERY_REQUEST = False  # shopdesk.accounts.middleware moves the expiry on, once a minute
SESSION_COOKIE_HTTPONLY = True

# Sign-in throttling (django-axes): a user name from one address is locked after a few failures,
# so one person's mistakes behind the shop's router cannot lock out everyone; reset on success.
AUTHENTICATION_BACKENDS = [
    "axes.backends.AxesStandaloneBackend",
    "shopdesk.accounts.backends.ShopModelBackend",  # permissions in one query
]
AXES_FAILURE_LIMIT = env_int("AXES_FAILURE_LIMIT", "5", minimum=1, maximum=10_000)
AXES_COOLOFF_TIME = 0.25  # hours: fifteen minutes
AXES_LOCKOUT_PARAMETERS = [["username", "ip_address"]]
AXES_RESET_ON_SUCCESS = True
AXES_LOCKOUT_TEMPLATE = "accounts/locked_out.html"
# The address is REMOTE_ADDR unless the shop runs behind a reverse proxy: then set
# AXES_META_PRECEDENCE_ORDER=HTTP_X_FORWARDED_FOR,REMOTE_ADDR and have the proxy set
# X-Forwarded-For to the client's address (django-ipware reads it; AXES_PROXY_COUNT counts the
# further proxies listed in that header, 0 for one proxy in front). A header that does not
# match is ignored for REMOTE_ADDR, so a client cannot pick the address it is counted under.
AXES_IPWARE_META_PRECEDENCE_ORDER = env_list("AXES_META_PRECEDENCE_ORDER", "REMOTE_ADDR")
AXES_IPWARE_PROXY_COUNT = env_int("AXES_PROXY_COUNT", "0", minimum=0, maximum=10)
AXES_IPWARE_PROXY_ORDER = "right-most"

# Content security policy (django-csp 4): only the shop's own files; no inline script or style,
# no eval. htmx is told not to add its indicator styles (the htmx-config meta tag in base.html).
CONTENT_SECURITY_POLICY = {
    "DIRECTIVES": {
        "default-src": ["'self'"],
        "script-src": ["'self'"],
        "style-src": ["'self'"],
        "img-src": ["'self'", "data:"],
        "font-src": ["'self'"],
        "connect-src": ["'self'"],
        "object-src": ["'none'"],
        "base-uri": ["'self'"],
        "form-action": ["'self'"],
        "frame-ancestors": ["'none'"],
    }
}

# Request size limits: a form of a few hundred fields and 2.5 MB; larger is refused with a 400.
DATA_UPLOAD_MAX_MEMORY_SIZE = 2_621_440
DATA_UPLOAD_MAX_NUMBER_FIELDS = 1000
FILE_UPLOAD_MAX_MEMORY_SIZE = 2_621_440
CSRF_COOKIE_HTTPONLY = False  # htmx reads no cookie: the token is sent from the page's <body>
# A form refused by the CSRF check gets the shop's page (Django's own has an inline style).
CSRF_FAILURE_VIEW = "shopdesk.shop.views.csrf_failure"
X_FRAME_OPTIONS = "DENY"
if not DEBUG:
    SECURE_PROXY_SSL_HEADER = ("HTTP_X_FORWARDED_PROTO", "https")
    SECURE_SSL_REDIRECT = env_bool("SECURE_SSL_REDIRECT", True)
    SESSION_COOKIE_SECURE = True
    CSRF_COOKIE_SECURE = True
    SECURE_HSTS_SECONDS = env_int("SECURE_HSTS_SECONDS", "31536000", minimum=0, maximum=63072000)
    SECURE_HSTS_INCLUDE_SUBDOMAINS = env_bool("SECURE_HSTS_INCLUDE_SUBDOMAINS", True)
    # The shop's own domain, served only over HTTPS: ask browsers to preload it (security.W021).
    # A shop on a shared or test domain sets SECURE_HSTS_PRELOAD=false, a decision the deploy
    # check is then told about instead of warning on every run.
    SECURE_HSTS_PRELOAD = env_bool("SECURE_HSTS_PRELOAD", True)
    if not SECURE_HSTS_PRELOAD:
        SILENCED_SYSTEM_CHECKS = ["security.W021"]

LOGGING = {
    "version": 1,
    "disable_existing_loggers": False,
    "handlers": {"console": {"class": "logging.StreamHandler"}},
    "root": {"handlers": ["console"], "level": env_str("LOG_LEVEL", "INFO")},
    # WeasyPrint reports each rendering step at INFO: noise on a printer script's terminal.
    # django-axes logs every sign-in at INFO; failures and lock-outs come at WARNING.
    "loggers": {"weasyprint.progress": {"level": "WARNING"}, "axes": {"level": "WARNING"}},
}

# --- The shop ---------------------------------------------------------------------------------
SHOP_NAME = env_str("SHOP_NAME", "Hollow Pine Suspension Works")
SHOP_PRESSURE_UNIT = env_choice("SHOP_PRESSURE_UNIT", "psi", ("psi", "bar"))
SHOP_VOLUME_UNIT = env_choice("SHOP_VOLUME_UNIT", "mL", ("mL", "fl oz"))
SHOP_LENGTH_UNIT = env_choice("SHOP_LENGTH_UNIT", "mm", ("mm", "in"))
SHOP_TAX_RATE = env_decimal("SHOP_TAX_RATE", "0.20", minimum=Decimal("0"), maximum=Decimal("0.5"))
SHOP_CURRENCY = env_str("SHOP_CURRENCY", "£")

# The bench: the shop's temperature (for weighing oil), the thresholds the oil diagnosis uses,
# how far a fill may stray from the spec before the technician must confirm it, and the rate
# for extra labour. Shop settings, not physics: every shop may set its own.
SHOP_TEMPERATURE_C = float(
    env_decimal("SHOP_TEMPERATURE_C", "20", minimum=Decimal("-10"), maximum=Decimal("45"))
)
SHOP_DRAIN_OVER_SPEC_PERCENT = float(
    env_decimal("SHOP_DRAIN_OVER_SPEC_PERCENT", "10", minimum=Decimal("1"), maximum=Decimal("100"))
)
SHOP_DRAIN_UNDER_SPEC_PERCENT = float(
    env_decimal("SHOP_DRAIN_UNDER_SPEC_PERCENT", "30", minimum=Decimal("1"), maximum=Decimal("100"))
)
SHOP_FILL_TOLERANCE_PERCENT = float(
    env_decimal("SHOP_FILL_TOLERANCE_PERCENT", "5", minimum=Decimal("0"), maximum=Decimal("50"))
)
SHOP_LABOUR_RATE = env_decimal("SHOP_LABOUR_RATE", "60.00", minimum=Decimal("0"), maximum=Decimal("1000"))

# The calculators' defaults: the share of the rider's weight a fork carries seated, the sag
# aimed for, and the lowest absolute pressure the low side of a damper piston may reach.
# All common practice, not published values: each shop sets its own.
SHOP_FORK_LOAD_SHARE = float(
    env_decimal("SHOP_FORK_LOAD_SHARE", "0.35", minimum=Decimal("0.1"), maximum=Decimal("0.9"))
)
SHOP_FORK_SAG = float(env_decimal("SHOP_FORK_SAG", "0.20", minimum=Decimal("0.05"), maximum=Decimal("0.6")))
SHOP_CAVITATION_THRESHOLD_KPA = float(
    env_decimal("SHOP_CAVITATION_THRESHOLD_KPA", "30", minimum=Decimal("0"), maximum=Decimal("101"))
)

# --- Printed documents (job cards, service reports) -------------------------------------------
# The paper the shop prints on, and the address a job card's QR code points to when it is made
# without a request (a command, a printer script); reminders' links use it too. Pages use the
# address they were asked on.
SHOP_PAPER_SIZE = env_choice("SHOP_PAPER_SIZE", "A4", ("A4", "Letter"))
SHOP_BASE_URL = env_str("SHOP_BASE_URL", "http://127.0.0.1:8000").rstrip("/")
if not SHOP_BASE_URL.startswith(("http://", "https://")) or " " in SHOP_BASE_URL:
    raise ImproperlyConfigured(
        f"SHOP_BASE_URL must be an http:// or https:// address, not {SHOP_BASE_URL!r}."
    )
# Batches of job cards render in a background thread; tests run them in the request instead.
SHOP_PRINT_IN_BACKGROUND = env_bool("SHOP_PRINT_IN_BACKGROUND", not TESTING)


# --- The owner's reminders --------------------------------------------------------------------
# EMAIL_BACKEND and DEFAULT_FROM_EMAIL are above (the console by default); for SMTP set
# EMAIL_BACKEND=django.core.mail.backends.smtp.EmailBackend and these.
EMAIL_HOST = env_str("EMAIL_HOST", "localhost")
EMAIL_PORT = env_int("EMAIL_PORT", "25", minimum=1, maximum=65535)
EMAIL_HOST_USER = os.environ.get("EMAIL_HOST_USER", "")
EMAIL_HOST_PASSWORD = os.environ.get("EMAIL_HOST_PASSWORD", "")
EMAIL_USE_TLS = env_bool("EMAIL_USE_TLS", False)
EMAIL_TIMEOUT = env_int("EMAIL_TIMEOUT", "30", minimum=1, maximum=600)
# The links in a reminder (the unsubscribe page) use SHOP_BASE_URL, above: set it to the shop's
# address as customers reach it.
# Reminders go for services due within this many days (and for overdue ones not yet reminded).
SHOP_REMINDER_SOON_DAYS = env_int("SHOP_REMINDER_SOON_DAYS", "30", minimum=0, maximum=365)
# An unsubscribe link works this long after the reminder that carried it.
SHOP_UNSUBSCRIBE_MAX_AGE_DAYS = env_int("SHOP_UNSUBSCRIBE_MAX_AGE_DAYS", "365", minimum=1, maximum=3650)
