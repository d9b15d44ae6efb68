"""Settings shared by every role; secrets and deployment facts come only from the environment."""

import os
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

ALLOWED_HOSTS = env_list("ALLOWED_HOSTS", "127.0.0.1,localhost" if DEBUG else "")

INSTALLED_APPS = [
    "django.contrib.admin",
    "django.contrib.auth",
    "django.contrib.contenttypes",
    "django.contrib.sessions",
    "django.contrib.messages",
    "django.contrib.staticfiles",
    "rest_framework",
    "rest_framework.authtoken",
    "django_filters",
    "drf_spectacular",
    "drf_spectacular_sidecar",
    "shop.core",
    "shop.intake",
    "shop.bench",
    "reports",
]

MIDDLEWARE = [
    "django.middleware.security.SecurityMiddleware",
    "django.contrib.sessions.middleware.SessionMiddleware",
    "django.middleware.common.CommonMiddleware",
    "django.middleware.csrf.CsrfViewMiddleware",
    "django.contrib.auth.middleware.AuthenticationMiddleware",
    "django.contrib.messages.middleware.MessageMiddleware",
    "django.middleware.clickjacking.XFrameOptionsMiddleware",
]

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
    # WAL and a busy timeout so that two benches writing at once wait instead of failing.
    DATABASES["default"].setdefault("OPTIONS", {}).update(
        {"timeout": 20, "transaction_mode": "IMMEDIATE", "init_command": "PRAGMA journal_mode=WAL;"}
    )

DEFAULT_AUTO_FIELD = "django.db.models.BigAutoField"

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

STORAGES = {
    "default": {"BACKEND": "django.core.files.storage.FileSystemStorage"},
    "staticfiles": {"BACKEND": "django.contrib.staticfiles.storage.StaticFilesStorage"},
}
if os.environ.get("AWS_STORAGE_BUCKET_NAME"):
    # S3-compatible object storage for evidence and certificates (django-storages, `s3` extra).
    STORAGES["default"] = {
        "BACKEND": "storages.backends.s3.S3Storage",
        "OPTIONS": {
            "bucket_name": os.environ["AWS_STORAGE_BUCKET_NAME"],
            "endpoint_url": os.environ.get("AWS_S3_ENDPOINT_URL") or None,
            "file_overwrite": False,
            "default_acl": None,
            "querystring_auth": True,
        },
    }

# Largest evidence upload accepted, in bytes.
EVIDENCE_MAX_BYTES = int(os.environ.get("EVIDENCE_MAX_BYTES", str(20 * 1024 * 1024)))
# Most readings one CSV import may carry (separate from the upload size limit).
READINGS_CSV_MAX_ROWS = int(os.environ.get("READINGS_CSV_MAX_ROWS", "10000"))
DATA_UPLOAD_MAX_MEMORY_SIZE = 2_621_440
FILE_UPLOAD_MAX_MEMORY_SIZE = 2_621_440

REST_FRAMEWORK = {
    "DEFAULT_AUTHENTICATION_CLASSES": [
        # Token first, so an anonymous caller gets 401 with a WWW-Authenticate challenge.
        "rest_framework.authentication.TokenAuthentication",
        "rest_framework.authentication.SessionAuthentication",
    ],
    "DEFAULT_PERMISSION_CLASSES": ["rest_framework.permissions.IsAuthenticated"],
    "DEFAULT_PAGINATION_CLASS": "shop.core.pagination.ShopPagination",
    "PAGE_SIZE": 50,
    "DEFAULT_FILTER_BACKENDS": [
        "django_filters.rest_framework.DjangoFilterBackend",
        "rest_framework.filters.SearchFilter",
        "rest_framework.filters.OrderingFilter",
    ],
    "DEFAULT_SCHEMA_CLASS": "drf_spectacular.openapi.AutoSchema",
    "EXCEPTION_HANDLER": "shop.core.errors.shop_exception_handler",
    "NON_FIELD_ERRORS_KEY": "non_field_errors",
    "COERCE_DECIMAL_TO_STRING": False,
    "DEFAULT_THROTTLE_RATES": {"verify": os.environ.get("VERIFY_THROTTLE_RATE", "60/minute")},
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
    "ENUM_NAME_OVERRIDES": {"JobStateEnum": "shop.intake.models.JobState"},
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
