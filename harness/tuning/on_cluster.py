"""A tuned suite on a Dask cluster: its workers must reach the tuning storage. (Each worker of
the cluster runs one tuning worker, harness/tuning/workers.py `tune`.)"""

from __future__ import annotations

from harness.errors import InputError
from harness.tuning.storage import parse_url, shown


def check_shared(address: str, storage_url: str) -> None:
    """Workers on other machines cannot reach an SQLite file of this one."""
    parsed = parse_url(storage_url)
    if parsed.get_backend_name() == "sqlite" and not address.startswith("local:"):
        raise InputError(
            f"--cluster {address}: tuning storage {shown(parsed)} is a file on this machine; "
            "allowed: --tuning-database or --store with a PostgreSQL URL every worker reaches"
        )
