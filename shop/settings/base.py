"""Settings shared by every role; secrets and deployment facts come only from the environment."""

import base64
import hashlib
import os
from datetime import timedelta
from pathlib import Path

import dj_database_url
from django.core.exceptions import ImproperlyConfigured

BASE_DIR = Path(__file__).resolve().parent.parent.parent
DATA_DIR = Path(os.environ.get("SHOP_DATA_DIR", BASE_DIR / "var"))


def env_flag(name: str, default: bool = False) -> bool:
    """Read a yes/no environment variable ("1", "true", "yes", "on" count as yes)."""
    value = os.environ.get(name)
    if value is None:
        return default
    return value.strip().lower() in {"1", "true", "yes", "on"}


def env_list(name: str, default: str = "") -> list[str]:
    """Read a comma-separated environment variable into a list, dropping blanks."""
    return [item.strip() for item in os.environ.get(name, default).split(",") if item.strip()]


DEBUG = env_flag("DEBUG")
SECRET_KEY = os.environ.get("SECRET_KEY", "")
if not SECRET_KEY:
    if not DEBUG:
        raise ImproperlyConfigured(
            "SECRET_KEY is not set. Set it in the environment (or DEBUG=1 for local development)."
        )
    SECRET_KEY = "dev-only-insecure-key-never-use-in-production"  # noqa: S105

# The key that signs certificates and backup manifests (shop.core.signing). It lives here, in
# the environment, never in the database or a backup, so that an edited record or archive
# cannot be re-signed. Keep it apart from SECRET_KEY; on a rotation list the former key in
# RECORD_SIGNING_OLD_KEYS so that what it signed still verifies.
RECORD_SIGNING_KEY = os.environ.get("RECORD_SIGNING_KEY", "")
RECORD_SIGNING_OLD_KEYS = env_list("RECORD_SIGNING_OLD_KEYS")
if not RECORD_SIGNING_KEY:
    if not DEBUG:
        raise ImproperlyConfigured(
            "RECORD_SIGNING_KEY is not set. Set it in the environment to a long random secret "
            "kept apart from the database and its backups (or DEBUG=1 for local development)."
        )
    RECORD_SIGNING_KEY = "dev-only-insecure-record-signing-key"  # noqa: S105

ALLOWED_HOSTS = env_list("ALLOWED_HOSTS", "127.0.0.1,localhost" if DEBUG else "")

INSTALLED_APPS = [
    "django.contrib.admin",
    "django.contrib.auth",
    "django.contrib.contenttypes",
    "django.contrib.sessions",
    "django.contrib.messages",
    "django.contrib.staticfiles",
    "rest_framework",
    "django_filters",
    "drf_spectacular",
    "drf_spectacular_sidecar",
    "axes",
    "shop.core",
    "shop.intake",
    "shop.bench",
    "reports",
]

# The header middleware come first, so that they also see the answers that later middleware
# give on their own (redirects, CSRF refusals, lockouts). Axes comes last, as it asks.
MIDDLEWARE = [
    "shop.core.middleware.RequestSizeLimitMiddleware",
    "shop.core.middleware.ContentSecurityPolicyMiddleware",
    "django.middleware.clickjacking.XFrameOptionsMiddleware",
    "django.middleware.security.SecurityMiddleware",
    "django.contrib.sessions.middleware.SessionMiddleware",
    "django.middleware.common.CommonMiddleware",
    "django.middleware.csrf.CsrfViewMiddleware",
    "django.contrib.auth.middleware.AuthenticationMiddleware",
    "django.contrib.messages.middleware.MessageMiddleware",
    "axes.middleware.AxesMiddleware",
]

# Security headers on every response (HSTS is added by the production settings).
SECURE_CONTENT_TYPE_NOSNIFF = True
X_FRAME_OPTIONS = "DENY"
SECURE_REFERRER_POLICY = "same-origin"
SECURE_CROSS_ORIGIN_OPENER_POLICY = "same-origin"
# Content-Security-Policy (shop.core.middleware). Scripts only from our own files (the docs page
# loads its start-up script as a file), plus the one inline handler of the browsable API's
# "Log out" link, allowed by its hash alone. Inline styles stay allowed because the admin's
# change lists and the docs and verification pages carry <style> blocks; styles run no code.
DRF_LOGOUT_HANDLER = 'document.getElementById("logoutForm").submit()'
DRF_LOGOUT_HANDLER_HASH = base64.b64encode(hashlib.sha256(DRF_LOGOUT_HANDLER.encode()).digest())
SECURE_CSP = {
    "default-src": ["'self'"],
    "script-src": ["'self'", "'unsafe-hashes'", f"'sha256-{DRF_LOGOUT_HANDLER_HASH.decode()}'"],
    "style-src": ["'self'", "'unsafe-inline'"],
    "img-src": ["'self'", "data:"],
    "font-src": ["'self'"],
    "connect-src": ["'self'"],
    "object-src": ["'none'"],
    "base-uri": ["'none'"],
    "form-action": ["'self'"],
    "frame-ancestors": ["'none'"],
}

ROOT_URLCONF = "shop.urls"
WSGI_APPLICATION = "shop.wsgi.application"
ASGI_APPLICATION = "shop.asgi.application"

TEMPLATES = [
    {
        "BACKEND": "django.template.backends.django.DjangoTemplates",
        "DIRS": [BASE_DIR / "shop" / "templates"],
        "APP_DIRS": True,
        "OPTIONS": {
            "context_processors": [
                "django.template.context_processors.request",
                "django.contrib.auth.context_processors.auth",
                "django.contrib.messages.context_processors.messages",
            ],
        },
    },
]

DATABASES = {
    "default": dj_database_url.parse(
        os.environ.get("DATABASE_URL", f"sqlite:///{DATA_DIR / 'shop.sqlite3'}"),
        conn_max_age=int(os.environ.get("DATABASE_CONN_MAX_AGE", "0")),
    )
}
if DATABASES["default"]["ENGINE"] == "django.db.backends.sqlite3":
    # SQLite opens its file but makes no folder: a fresh clone has no var/ (it is git-ignored).
    if DATABASES["default"]["NAME"] not in {"", ":memory:"}:
        Path(DATABASES["default"]["NAME"]).parent.mkdir(parents=True, exist_ok=True)
    # WAL and a busy timeout so that two benches writing at once wait instead of failing.
    DATABASES["default"].setdefault("OPTIONS", {}).update(
        {"timeout": 20, "transaction_mode": "IMMEDIATE", "init_command": "PRAGMA journal_mode=WAL;"}
    )

DEFAULT_AUTO_FIELD = "django.db.models.BigAutoField"

# The cache every app process shares with no extra service: a table in the database, created by
# `migrate` (shop.core migration 0004). The per-address limits count there, so two workers
# count together.
CACHE_TABLE = "shop_cache"
CACHES = {
    "default": {
        "BACKEND": "django.core.cache.backends.db.DatabaseCache",
        "LOCATION": CACHE_TABLE,
    }
}

# django-axes first: it refuses a locked-out sign-in before the password is checked.
AUTHENTICATION_BACKENDS = [
    "axes.backends.AxesStandaloneBackend",
    "django.contrib.auth.backends.ModelBackend",
]
# Sign-in lockout (django-axes, counted in the database so every app process agrees): after
# LOGIN_FAILURE_LIMIT failures for one user name from one address, that pair is refused for
# LOGIN_LOCKOUT_MINUTES, restarted by each further failure. Session, admin and token sign-in.
AXES_FAILURE_LIMIT = int(os.environ.get("LOGIN_FAILURE_LIMIT", "5"))
AXES_COOLOFF_TIME = timedelta(minutes=int(os.environ.get("LOGIN_LOCKOUT_MINUTES", "15")))
# The pair, not the address alone: behind one proxy or shop router every caller shares an
# address, and one person's typos must not lock out the whole shop.
AXES_LOCKOUT_PARAMETERS = [["username", "ip_address"]]
# Besides: after LOGIN_USERNAME_FAILURE_LIMIT failures for one user name from any addresses
# together, that name is locked out everywhere (shop.core.signin.ShopLockoutHandler), so that
# changing address does not buy more guesses.
AXES_HANDLER = "shop.core.signin.ShopLockoutHandler"
LOGIN_USERNAME_FAILURE_LIMIT = int(os.environ.get("LOGIN_USERNAME_FAILURE_LIMIT", "20"))
AXES_RESET_ON_SUCCESS = True
AXES_CLIENT_IP_CALLABLE = "shop.core.signin.client_address"
AXES_LOCKOUT_CALLABLE = "shop.core.signin.lockout_response"
# API tokens stop working this many hours after they were issued.
TOKEN_TTL_HOURS = float(os.environ.get("TOKEN_TTL_HOURS", "12"))
# How many proxies in front of the app append to X-Forwarded-For (1 behind a TLS proxy). The
# throttles and the lockout take the caller's address from there; 0 trusts only the socket.
TRUSTED_PROXY_COUNT = int(os.environ.get("TRUSTED_PROXY_COUNT", "0"))

AUTH_PASSWORD_VALIDATORS = [
    {"NAME": "django.contrib.auth.password_validation.UserAttributeSimilarityValidator"},
    {"NAME": "django.contrib.auth.password_validation.MinimumLengthValidator"},
    {"NAME": "django.contrib.auth.password_validation.CommonPasswordValidator"},
    {"NAME": "django.contrib.auth.password_validation.NumericPasswordValidator"},
]

LANGUAGE_CODE = "en"
TIME_ZONE = os.environ.get("TIME_ZONE", "UTC")
USE_I18N = True
USE_TZ = True

STATIC_URL = "static/"
STATIC_ROOT = Path(os.environ.get("STATIC_ROOT", DATA_DIR / "static"))
MEDIA_URL = "media/"
MEDIA_ROOT = Path(os.environ.get("MEDIA_ROOT", DATA_DIR / "media"))


def object_storage(bucket_name: str, endpoint_url: str | None = None) -> dict:
    """The STORAGES entry for S3-compatible object storage (django-storages, `s3` extra).

    Never overwrite: saving to a key that exists stores under a new key, so an evidence file or
    an issued certificate can never be replaced. Objects stay private; reads go through the app.
    Credentials come from the usual AWS_ACCESS_KEY_ID / AWS_SECRET_ACCESS_KEY variables.
    """
    return {
        "BACKEND": "storages.backends.s3.S3Storage",
        "OPTIONS": {
            "bucket_name": bucket_name,
            "endpoint_url": endpoint_url or None,
            "file_overwrite": False,
            "default_acl": None,
            "querystring_auth": True,
        },
    }


STORAGES = {
    "default": {"BACKEND": "django.core.files.storage.FileSystemStorage"},
    "staticfiles": {"BACKEND": "django.contrib.staticfiles.storage.StaticFilesStorage"},
}
if os.environ.get("AWS_STORAGE_BUCKET_NAME"):
    STORAGES["default"] = object_storage(
        os.environ["AWS_STORAGE_BUCKET_NAME"], os.environ.get("AWS_S3_ENDPOINT_URL")
    )

# Largest evidence upload accepted, in bytes; a kind of file named in
# EVIDENCE_MAX_BYTES_BY_KIND (image, video, document, text) has its own limit instead.
EVIDENCE_MAX_BYTES = int(os.environ.get("EVIDENCE_MAX_BYTES", str(20 * 1024 * 1024)))
# Largest request body read at all: the largest evidence file plus room for the multipart
# envelope and form fields. Larger requests are refused (413) before their body is read.
REQUEST_SIZE_MARGIN = 1024 * 1024
REQUEST_MAX_BYTES = EVIDENCE_MAX_BYTES + REQUEST_SIZE_MARGIN
EVIDENCE_MAX_BYTES_BY_KIND = {
    "video": int(os.environ.get("EVIDENCE_VIDEO_MAX_BYTES", str(100 * 1024 * 1024))),
    **{
        kind: int(os.environ[f"EVIDENCE_{kind.upper()}_MAX_BYTES"])
        for kind in ("image", "document", "text")
        if os.environ.get(f"EVIDENCE_{kind.upper()}_MAX_BYTES")
    },
}
# Most readings one CSV import may carry (separate from the upload size limit).
READINGS_CSV_MAX_ROWS = int(os.environ.get("READINGS_CSV_MAX_ROWS", "10000"))
# Restore refuses an archive member that unpacks to more bytes than this (a zip bomb, a forged
# size), and a single record (one JSON line) longer than BACKUP_MAX_ROW_BYTES.
BACKUP_MAX_MEMBER_BYTES = int(os.environ.get("BACKUP_MAX_MEMBER_BYTES", str(8 * 1024**3)))
BACKUP_MAX_ROW_BYTES = int(os.environ.get("BACKUP_MAX_ROW_BYTES", str(16 * 1024**2)))
DATA_UPLOAD_MAX_MEMORY_SIZE = 2_621_440
FILE_UPLOAD_MAX_MEMORY_SIZE = 2_621_440

REST_FRAMEWORK = {
    "DEFAULT_AUTHENTICATION_CLASSES": [
        # Token first, so an anonymous caller gets 401 with a WWW-Authenticate challenge.
        "shop.core.authentication.ExpiringTokenAuthentication",
        "rest_framework.authentication.SessionAuthentication",
    ],
    "DEFAULT_PERMISSION_CLASSES": ["rest_framework.permissions.IsAuthenticated"],
    "DEFAULT_PAGINATION_CLASS": "shop.core.pagination.ShopPagination",
    "PAGE_SIZE": 50,
    "DEFAULT_FILTER_BACKENDS": [
        "shop.core.query_parameters.KnownQueryParameters",
        "django_filters.rest_framework.DjangoFilterBackend",
        "rest_framework.filters.SearchFilter",
        "shop.core.ordering.ShopOrderingFilter",
    ],
    "DEFAULT_SCHEMA_CLASS": "drf_spectacular.openapi.AutoSchema",
    "EXCEPTION_HANDLER": "shop.core.errors.shop_exception_handler",
    "NON_FIELD_ERRORS_KEY": "non_field_errors",
    "COERCE_DECIMAL_TO_STRING": False,
    # Per-address limits on the anonymous endpoints.
    "DEFAULT_THROTTLE_RATES": {
        "verify": os.environ.get("VERIFY_THROTTLE_RATE", "60/minute"),
        "token": os.environ.get("TOKEN_THROTTLE_RATE", "10/minute"),
        "login": os.environ.get("LOGIN_THROTTLE_RATE", "10/minute"),
    },
    "NUM_PROXIES": TRUSTED_PROXY_COUNT,
}

SPECTACULAR_SETTINGS = {
    "TITLE": "Bench record service API",
    "DESCRIPTION": (
        "Intake, repair records and series-lamp power-up tests for a repair shop. "
        "Mains voltages can kill: this service supports trained technicians and never replaces "
        "local codes or licensed practice."
    ),
    "VERSION": "0.1.0",
    "SERVE_INCLUDE_SCHEMA": False,
    "SWAGGER_UI_DIST": "SIDECAR",
    "SWAGGER_UI_FAVICON_HREF": "SIDECAR",
    "REDOC_DIST": "SIDECAR",
    "COMPONENT_SPLIT_REQUEST": True,
    "ENUM_NAME_OVERRIDES": {
        "JobStateEnum": "shop.intake.models.JobState",
        "SourcePointEnum": "shop.bench.models.SourcePoint",
        "DecisionMethodEnum": "shop.intake.models.DecisionMethod",
        "RecordableMethodEnum": "shop.intake.models.RECORDABLE_METHOD_CHOICES",
    },
}

# The shop's identity, printed on receipts and certificates.
SHOP_NAME = os.environ.get("SHOP_NAME", "Bench record service")
SHOP_ADDRESS = os.environ.get("SHOP_ADDRESS", "")
SHOP_PHONE = os.environ.get("SHOP_PHONE", "")
# Where customers reach the verification page (printed and QR-coded on certificates).
SHOP_PUBLIC_URL = os.environ.get("SHOP_PUBLIC_URL", "http://127.0.0.1:8000")
CERTIFICATE_PAPER_SIZE = os.environ.get("CERTIFICATE_PAPER_SIZE", "A4")
if CERTIFICATE_PAPER_SIZE not in {"A4", "Letter"}:
    raise ImproperlyConfigured("CERTIFICATE_PAPER_SIZE must be A4 or Letter.")
# The shop's terms, printed on intake receipts.
SHOP_TERMS = os.environ.get(
    "SHOP_TERMS",
    "Diagnosis and estimates are free. Nothing is repaired without your approval. Units not "
    "collected within 90 days of our notice may be disposed of.",
)

LOGIN_URL = "/api/auth/login/"
LOGIN_REDIRECT_URL = "/api/docs/"
