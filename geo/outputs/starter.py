"""Write a new input file (``mastplan new-site``): never over an existing file unless asked."""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

from geo.errors import OutputError

__all__ = ["write_new_file"]


def write_new_file(path: str | Path, text: str, overwrite: bool = False) -> Path:
    """Write ``text`` to ``path`` (its folders made as needed), refusing an existing file unless ``overwrite``.

    The text goes to a temporary file beside ``path`` first and is moved into place, so a failed
    write leaves no half file; without ``overwrite`` the move is a hard link, which fails on an
    existing file even when another process made it meanwhile.

    Parameters
    ----------
    path : str or Path
        The new file.
    text : str
        Its content, written as UTF-8.
    overwrite : bool
        Replace a file already at ``path``.

    Returns
    -------
    Path

    Raises
    ------
    OutputError
        When ``path`` exists (without ``overwrite``), is a folder, or cannot be written (its folder neither).
    """
    path = Path(path)
    if path.is_dir():
        raise OutputError(f"{path}: is a folder; give a file name, e.g. {path / 'site.toml'}")
    if path.exists() and not overwrite:
        raise OutputError(f"{path}: already exists; choose another name, or add --overwrite to replace it")
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".partial", dir=path.parent)
    except OSError as exc:
        raise OutputError(f"{path}: cannot write there ({exc.strerror or exc})") from None
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="\n") as out:
            out.write(text)
        if overwrite:
            os.replace(tmp, path)
        else:
            os.link(tmp, path)
    except FileExistsError:
        raise OutputError(f"{path}: already exists; choose another name, or add --overwrite to replace it") from None
    except OSError as exc:
        raise OutputError(f"{path}: cannot write there ({exc.strerror or exc})") from None
    finally:
        if os.path.lexists(tmp):
            os.unlink(tmp)
    return path
