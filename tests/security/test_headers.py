"""Security headers on every response, and pages that still work under the CSP.

The docs page and the admin are fetched over HTTP from a live server together with every
script, style sheet and image they name, as a browser would under the policy.
"""

from __future__ import annotations

import base64
import hashlib
import json
import os
import subprocess
import sys
import urllib.request
from html.parser import HTMLParser
from pathlib import Path
from urllib.parse import urljoin, urlsplit

import pytest
from django.conf import settings
from django.contrib.auth.models import User
from django.test import Client

from shop.core.middleware import policy_header

ROOT = Path(__file__).resolve().parents[2]
# Script types a browser does not run, so the policy does not apply to them.
DATA_SCRIPT_TYPES = {"application/json", "application/ld+json"}


def expected_headers() -> dict[str, str]:
    return {
        "Content-Security-Policy": policy_header(settings.SECURE_CSP),
        "X-Content-Type-Options": "nosniff",
        "X-Frame-Options": "DENY",
        "Referrer-Policy": "same-origin",
    }


def assert_security_headers(headers) -> None:
    for name, value in expected_headers().items():
        assert headers.get(name) == value, f"{name}: {headers.get(name)!r}"


def handler_hash(code: str) -> str:
    return "'sha256-" + base64.b64encode(hashlib.sha256(code.encode()).digest()).decode() + "'"


def script_sources() -> list[str]:
    return settings.SECURE_CSP["script-src"]


def test_the_policy_allows_scripts_only_from_our_own_origin_or_by_hash():
    others = [s for s in script_sources() if s not in {"'self'", "'unsafe-hashes'"}]
    assert "'self'" in script_sources()
    assert others and all(source.startswith("'sha256-") for source in others)
    policy = policy_header(settings.SECURE_CSP)
    assert "'unsafe-eval'" not in policy
    assert "script-src 'self' 'unsafe-inline'" not in policy
    assert "frame-ancestors 'none'" in policy
    assert "object-src 'none'" in policy


def lock_out(client: Client, test_settings) -> object:
    test_settings.AXES_FAILURE_LIMIT = 1
    return client.post("/api/auth/token/", {"username": "tech_theo", "password": "wrong"})


def throttle(client: Client, test_settings) -> object:
    test_settings.REST_FRAMEWORK = {
        **test_settings.REST_FRAMEWORK,
        "DEFAULT_THROTTLE_RATES": {
            **test_settings.REST_FRAMEWORK["DEFAULT_THROTTLE_RATES"],
            "token": "1/minute",
        },
    }
    client.post("/api/auth/token/", {"username": "x"})
    return client.post("/api/auth/token/", {"username": "x"})


# name -> (signed in as, how to get the response from (client, job, settings), expected status)
RESPONSES = {
    "refused API read": (None, lambda c, job, s: c.get("/api/jobs/"), 401),
    "API read": ("technician", lambda c, job, s: c.get("/api/jobs/"), 200),
    "browsable API page": (
        "technician",
        lambda c, job, s: c.get("/api/jobs/", HTTP_ACCEPT="text/html"),
        200,
    ),
    "validation error": ("front_desk", lambda c, job, s: c.post("/api/customers/", {}), 400),
    "unknown path": (None, lambda c, job, s: c.get("/no/such/page/"), 404),
    "slash redirect": (None, lambda c, job, s: c.get("/api/jobs"), 301),
    "receipt PDF": ("technician", lambda c, job, s: c.get(f"/api/jobs/{job.pk}/receipt.pdf"), 200),
    "docs page": (None, lambda c, job, s: c.get("/api/docs/"), 200),
    "docs start-up script": (None, lambda c, job, s: c.get("/api/docs/?script="), 200),
    "schema": (None, lambda c, job, s: c.get("/api/schema/"), 200),
    "admin sign-in": (None, lambda c, job, s: c.get("/admin/login/"), 200),
    "browser sign-in": (None, lambda c, job, s: c.get("/api/auth/login/"), 200),
    "verification page": (None, lambda c, job, s: c.get("/verify/NO-SUCH/?code=x"), 404),
    "lockout": (None, lambda c, job, s: lock_out(c, s), 429),
    "throttled": (None, lambda c, job, s: throttle(c, s), 429),
}


@pytest.mark.parametrize("name", list(RESPONSES))
def test_every_response_carries_the_security_headers(name, staff, job, settings):
    role, fetch, status = RESPONSES[name]
    client = Client()
    if role:
        client.force_login(staff[role])
    response = fetch(client, job, settings)
    assert response.status_code == status, response.content[:300]
    assert_security_headers(response.headers)


def test_a_csrf_refusal_carries_the_security_headers(staff):
    client = Client(enforce_csrf_checks=True)
    response = client.post("/api/auth/login/", {"username": "tech_theo", "password": "x"})
    assert response.status_code == 403
    assert_security_headers(response.headers)


def test_production_adds_hsts_and_sends_plain_http_to_https():
    """Production settings in a fresh process: HSTS on HTTPS answers, plain HTTP redirected."""
    script = (
        "import django, json; django.setup()\n"
        "from django.test import Client\n"
        "secure = Client().get('/api/docs/', secure=True)\n"
        "plain = Client().get('/api/docs/')\n"
        "print(json.dumps({'secure': [secure.status_code, dict(secure.headers)],"
        " 'plain': [plain.status_code, dict(plain.headers)]}))\n"
    )
    env = {
        **{k: v for k, v in os.environ.items() if k not in {"DEBUG", "SECURE_SSL_REDIRECT"}},
        "DJANGO_SETTINGS_MODULE": "shop.settings.production",
        "SECRET_KEY": "a-long-random-production-secret-" + "x7Kq2" * 10,
        "ALLOWED_HOSTS": "testserver",
        "SHOP_PUBLIC_URL": "https://bench.example.org",
    }
    result = subprocess.run(
        [sys.executable, "-c", script],
        cwd=ROOT,
        env=env,
        capture_output=True,
        text=True,
        timeout=120,
    )
    assert result.returncode == 0, result.stderr
    answers = json.loads(result.stdout.strip().splitlines()[-1])
    status, headers = answers["secure"]
    assert status == 200
    assert headers["Strict-Transport-Security"] == "max-age=31536000; includeSubDomains; preload"
    assert_security_headers(headers)
    status, headers = answers["plain"]
    assert status == 301
    assert headers["Location"] == "https://testserver/api/docs/"
    assert_security_headers(headers)


class PageParts(HTMLParser):
    """Collects the assets a page loads and any inline code the policy would block."""

    def __init__(self):
        super().__init__()
        self.assets: list[tuple[str, str]] = []
        self.inline_code: list[str] = []
        self._in_inline_script = False

    def handle_starttag(self, tag, attrs):
        attributes = dict(attrs)
        for name, value in attrs:
            # An inline handler runs only if the policy names its hash under 'unsafe-hashes'.
            allowed = "'unsafe-hashes'" in script_sources() and handler_hash(value or "") in (
                script_sources()
            )
            if name.startswith("on") and not allowed:
                self.inline_code.append(f"<{tag} {name}={value}>")
            if name in {"href", "src", "action"} and (value or "").startswith("javascript:"):
                self.inline_code.append(f"<{tag} {name}={value}>")
        if tag == "script":
            if attributes.get("src"):
                self.assets.append(("script", attributes["src"]))
            elif attributes.get("type", "").lower() not in DATA_SCRIPT_TYPES:
                self._in_inline_script = True
        elif tag == "link" and attributes.get("href"):
            rel = (attributes.get("rel") or "").lower()
            if "stylesheet" in rel or "icon" in rel:
                self.assets.append(
                    ("style" if "stylesheet" in rel else "image", attributes["href"])
                )
        elif tag == "img" and attributes.get("src"):
            self.assets.append(("image", attributes["src"]))

    def handle_data(self, data):
        if self._in_inline_script and data.strip():
            self.inline_code.append(f"<script>{data.strip()[:60]}...")

    def handle_endtag(self, tag):
        if tag == "script":
            self._in_inline_script = False


def fetch(url: str, cookie: str = ""):
    headers = {"Accept": "text/html,*/*;q=0.8", **({"Cookie": cookie} if cookie else {})}
    request = urllib.request.Request(url, headers=headers)
    with urllib.request.urlopen(request, timeout=30) as response:  # noqa: S310 (loopback only)
        return response.status, response.headers, response.read()


def assert_page_works_under_the_policy(base_url: str, path: str, cookie: str = "") -> PageParts:
    status, headers, body = fetch(base_url + path, cookie)
    assert status == 200
    assert_security_headers(headers)
    parts = PageParts()
    parts.feed(body.decode())
    assert parts.inline_code == [], f"{path} has inline code the CSP blocks: {parts.inline_code}"
    assert any(kind == "script" for kind, _ in parts.assets), f"{path} loads no script at all"
    origin = urlsplit(base_url).netloc
    for kind, reference in parts.assets:
        url = urljoin(base_url + path, reference)
        # 'self' is the only source the policy allows for scripts, styles and linked images.
        assert urlsplit(url).netloc == origin, f"{path} loads {url} from another origin"
        asset_status, asset_headers, content = fetch(url, cookie)
        assert asset_status == 200, url
        assert content, f"{url} is empty"
        if kind == "script":
            assert "javascript" in asset_headers["Content-Type"], url
        if kind == "style":
            assert asset_headers["Content-Type"].startswith("text/css"), url
    return parts


def test_the_docs_page_and_its_assets_load_under_the_policy(live_server, transactional_db):
    parts = assert_page_works_under_the_policy(live_server.url, "/api/docs/")
    scripts = [ref for kind, ref in parts.assets if kind == "script"]
    assert any("swagger-ui-bundle.js" in ref for ref in scripts)
    start_up = next(ref for ref in scripts if "script" in urlsplit(ref).query.split("&")[0])
    _, _, code = fetch(urljoin(live_server.url + "/api/docs/", start_up))
    # The start-up script fetches the schema: it must come from our own origin (connect-src).
    assert b'"/api/schema/"' in code or b"'/api/schema/'" in code
    status, _, schema = fetch(live_server.url + "/api/schema/")
    assert status == 200
    assert b"openapi" in schema


@pytest.mark.parametrize(
    "path",
    [
        "/admin/",
        "/admin/intake/job/",
        "/admin/intake/job/add/",
        "/admin/auth/user/{lead}/change/",
        "/admin/auth/user/{lead}/password/",
        "/api/jobs/",  # the browsable API
    ],
)
def test_admin_and_browsable_api_pages_load_under_the_policy(live_server, transactional_db, path):
    lead = User.objects.create_superuser("lead_lena", password="not-a-real-pw-1")
    client = Client()
    client.force_login(lead)
    cookie = f"{settings.SESSION_COOKIE_NAME}={client.cookies[settings.SESSION_COOKIE_NAME].value}"
    assert_page_works_under_the_policy(live_server.url, path.format(lead=lead.pk), cookie)


def test_the_admin_sign_in_page_loads_under_the_policy(live_server, transactional_db):
    assert_page_works_under_the_policy(live_server.url, "/admin/login/")
