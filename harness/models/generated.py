"""Where PyG's generated modules go: a folder of Heedful's cache instead of the system's /tmp.

PyG turns templates into Python modules (torch_geometric.template.module_from_template), one
per message-passing class and process, written with tempfile.NamedTemporaryFile into
tempfile's default folder and never removed. While Heedful builds a model, tempfile's default
folder (`tempfile.tempdir`, the documented switch) is `<cache>/pyg-modules/<host>-<pid>`. A
process keeps its files while it lives (source lookups such as torch.jit's read them back);
the folders of this machine's ended processes are removed by the next process that builds a
model, so the folder holds the files of live processes only, however many runs have ended.
"""

from __future__ import annotations

import os
import shutil
import socket
import tempfile
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path

FOLDER = "pyg-modules"
_claimed: set[Path] = set()  # folders this process has set up


def _host() -> str:
    return "".join(c if c.isalnum() or c in "-." else "_" for c in socket.gethostname())


def _alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:  # another user's process
        return True
    return True


def remove_ended(root: Path) -> None:
    """Remove the folders of this machine's processes that have ended (others may be shared)."""
    prefix = f"{_host()}-"
    for folder in root.glob(f"{prefix}*"):
        pid = folder.name.removeprefix(prefix)
        if pid.isdigit() and int(pid) != os.getpid() and not _alive(int(pid)):
            shutil.rmtree(folder, ignore_errors=True)


def process_folder(cache: str | Path) -> Path:
    """This process's folder under `<cache>/pyg-modules`, emptied on first use (a folder left
    under the same process id belongs to an ended process)."""
    root = Path(cache) / FOLDER
    mine = root / f"{_host()}-{os.getpid()}"
    if mine not in _claimed:
        root.mkdir(parents=True, exist_ok=True)
        remove_ended(root)
        shutil.rmtree(mine, ignore_errors=True)
        mine.mkdir()
        _claimed.add(mine)
    return mine


@contextmanager
def generated_modules_in(cache: str | Path) -> Iterator[Path]:
    """Within the block, PyG (and any other temporary file) is written to this process's
    folder under `<cache>/pyg-modules`."""
    folder = process_folder(cache)
    before = tempfile.tempdir
    tempfile.tempdir = str(folder)
    try:
        yield folder
    finally:
        tempfile.tempdir = before
