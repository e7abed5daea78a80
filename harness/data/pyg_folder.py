"""What a PyG dataset folder may hold: files PyG would unpickle only if Heedful saw them made.

PyG unpickles some files of a dataset folder (processed `.pt` files such as pre_transform.pt,
and raw formats that are pickles), and unpickling can run any code. A manifest in the root
folder lists, with their SHA-256, the files of that kind present after each load Heedful did
(downloaded, or written by PyG under Heedful). Before loading, any such file that is not in
the manifest with the same digest is refused, unless the suite sets `data.trusted = true`.
"""

from __future__ import annotations

import hashlib
import json
from pathlib import Path

from harness.errors import InputError

MANIFEST = "heedful-manifest.json"
PICKLE_SUFFIXES = (".pt", ".pth", ".pkl", ".pickle")
PICKLE_PROTOCOL = b"\x80"  # the first byte of every pickle of protocol 2 or later


def _digest(path: Path) -> str:
    digest = hashlib.sha256()
    with path.open("rb") as handle:
        for block in iter(lambda: handle.read(1 << 20), b""):
            digest.update(block)
    return digest.hexdigest()


def unpicklable_files(root: Path) -> list[Path]:
    """Files under `root` that PyG or torch could unpickle: by name, or by their first byte."""
    found = []
    for path in sorted(root.rglob("*")):
        if not path.is_file() or path.name == MANIFEST:
            continue
        if path.suffix.lower() in PICKLE_SUFFIXES:
            found.append(path)
            continue
        with path.open("rb") as handle:
            if handle.read(1) == PICKLE_PROTOCOL:
                found.append(path)
    return found


def _manifest(root: Path) -> dict[str, str]:
    try:
        recorded = json.loads((root / MANIFEST).read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return {}
    return recorded if isinstance(recorded, dict) else {}


def check_folder(root: str) -> None:
    """Refuse a file PyG would unpickle that Heedful did not see made (see module docstring)."""
    folder = Path(root)
    if not folder.is_dir():
        return
    known = _manifest(folder)
    for path in unpicklable_files(folder):
        name = path.relative_to(folder).as_posix()
        if known.get(name) != _digest(path):
            raise InputError(
                f"data.root: {path} would be unpickled by PyG, which can run code, and Heedful "
                "did not make it; allowed: delete it (PyG rebuilds processed files), or set "
                "data.trusted = true if you know where it came from"
            )


def record_folder(root: str) -> None:
    """After a load: add every file of that kind under `root` to the manifest."""
    folder = Path(root)
    if not folder.is_dir():
        return
    known = _manifest(folder)
    known |= {p.relative_to(folder).as_posix(): _digest(p) for p in unpicklable_files(folder)}
    partial = folder / (MANIFEST + ".partial")
    partial.write_text(json.dumps(known, indent=1, sort_keys=True) + "\n", encoding="utf-8")
    partial.replace(folder / MANIFEST)
