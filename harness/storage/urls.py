"""Database URLs as printed: every password masked, in each form SQLAlchemy accepts (in the
user part, as a `password=` query parameter of libpq, or with an unencoded `@` that leaves its
tail in the host), and secrets removed from any message that might repeat them.
"""

from __future__ import annotations

import re
from urllib.parse import quote, quote_plus

from sqlalchemy.engine import URL

from harness.errors import InputError

MASK = "***"


def _secret_key(key: str) -> bool:
    return "password" in key.lower()  # libpq's password and sslpassword


def misplaced_tail(url: URL) -> str | None:
    """A password's tail that an unencoded `@` left in the host: "a:b@c@host" gives "c"."""
    if url.host and "@" in url.host:
        return url.host.rsplit("@", 1)[0]
    return None


def secrets(url: URL) -> list[str]:
    """Every secret the URL holds, as given."""
    found = [url.password, misplaced_tail(url)]
    for key, value in url.query.items():
        if _secret_key(key):
            found += list(value) if isinstance(value, tuple) else [value]
    return [str(secret) for secret in found if secret]


def scrub(text: str, url: URL) -> str:
    """`text` with each of the URL's secrets (as given or URL-quoted) replaced by ***."""
    for secret in sorted(secrets(url), key=len, reverse=True):
        for form in {secret, quote(secret, safe=""), quote_plus(secret)}:
            text = text.replace(form, MASK)
    return text


def masked(url: URL) -> str:
    """The URL as printed: user part and password query parameters masked."""
    if misplaced_tail(url) is not None:
        url = url.set(host=url.host.rsplit("@", 1)[1])
    query = {key: MASK if _secret_key(key) else value for key, value in url.query.items()}
    shown = url.set(query=query).render_as_string(hide_password=True)
    return shown.replace(quote_plus(MASK), MASK)


def masked_text(text: str) -> str:
    """A URL that did not parse, as printed: its user part's password and any password
    parameter masked (up to the last `@` before the path, which covers an unencoded one)."""
    text = re.sub(r"(://[^/@:]*:)[^/]*@", rf"\1{MASK}@", text)
    return re.sub(r"(password=)[^&]*", rf"\1{MASK}", text, flags=re.IGNORECASE)


def check_password_encoded(url: URL, option: str) -> None:
    """An `@` in a password must be written %40; unencoded, the server's name would be wrong."""
    if misplaced_tail(url) is not None:
        raise InputError(
            f"{option} {masked(url)}: its password holds an unencoded '@'; allowed: a password "
            "with each '@' written as %40"
        )
