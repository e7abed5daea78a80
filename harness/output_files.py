"""Files the commands write for the user (report files, gate summaries, JUnit XML, baselines).

Each is written whole into a new file beside its target, opened without following links, and
renamed over the target: a symbolic link planted at the target (or at a sub-folder of a report)
is replaced, never written through, and a reader never sees half a file. A failure is one line
naming the file (exit status 2).
"""

from __future__ import annotations

import os
import secrets
from pathlib import Path

from harness.errors import InputError


def _cannot(path: Path, error: OSError) -> InputError:
    reason = error.strerror or type(error).__name__
    return InputError(f"{path}: cannot write ({reason}); allowed: a writable path with free space")


def output_folder(path: Path) -> Path:
    """A real folder at `path` inside an output folder: a symbolic link there is removed first,
    so nothing is written into the folder it pointed to."""
    if path.is_symlink():
        path.unlink()
    check_parent(path)
    try:
        path.mkdir(parents=True, exist_ok=True)
    except OSError as error:
        raise _cannot(path, error) from None
    return path


def check_parent(path: Path) -> None:
    """The folder a file will go to is a folder (or can be made): not a file."""
    for folder in Path(path).parents:
        if folder.exists() or folder.is_symlink():
            if not folder.is_dir():
                raise InputError(
                    f"{path}: cannot write: {folder} is a file, not a folder; allowed: a path "
                    "whose folders are folders"
                )
            return


def write_output(path: str | Path, content: str | bytes) -> Path:
    """`content` (text as UTF-8) at `path`, replacing whatever is there, a link included."""
    path = Path(path)
    check_parent(path)
    data = content.encode("utf-8") if isinstance(content, str) else content
    temporary = path.with_name(f".{path.name}.{secrets.token_hex(6)}.partial")
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        flags = os.O_WRONLY | os.O_CREAT | os.O_EXCL | getattr(os, "O_NOFOLLOW", 0)
        with os.fdopen(os.open(temporary, flags, 0o666), "wb") as handle:
            handle.write(data)
        os.replace(temporary, path)
    except OSError as error:
        temporary.unlink(missing_ok=True)
        raise _cannot(path, error) from None
    return path
