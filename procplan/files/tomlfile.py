"""Reading and writing TOML files: clear errors for malformed files, atomic writes that never lose a saved file."""

from __future__ import annotations

import os
import re
import tempfile
import tomllib
from pathlib import Path
from typing import Any

import tomli_w

from procplan.errors import InvalidInputError

NAME_PATTERN = re.compile(r"^[a-z0-9][a-z0-9._-]{0,63}$")


def read_toml(path: str | os.PathLike) -> dict[str, Any]:
    """Parse a TOML file, turning every failure into an InvalidInputError that names the file."""
    p = Path(path)
    try:
        text = p.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise InvalidInputError(str(p), "missing", "an existing file") from None
    except UnicodeDecodeError as exc:
        raise InvalidInputError(str(p), "not UTF-8 text", "a UTF-8 TOML file", str(exc)) from None
    except OSError as exc:
        raise InvalidInputError(str(p), "unreadable", "a readable file", str(exc)) from None
    return parse_toml(text, str(p))


def parse_toml(text: str, source: str = "TOML text") -> dict[str, Any]:
    """Parse TOML text; a syntax error names the source and the line."""
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InvalidInputError(source, "malformed TOML", "valid TOML", str(exc)) from None


def dump_toml(data: dict[str, Any]) -> str:
    """TOML text for a dict (None values dropped)."""
    return tomli_w.dumps(_drop_none(data))


def _drop_none(obj: Any) -> Any:
    if isinstance(obj, dict):
        return {k: _drop_none(v) for k, v in obj.items() if v is not None}
    if isinstance(obj, (list, tuple)):
        return [_drop_none(v) for v in obj]
    return obj


def check_name(field: str, name: str) -> str:
    """A library name that is safe as a file name: lower-case letters, digits, '.', '_', '-'; no path parts.

    >>> check_name("product.name", "chicken-roulade")
    'chicken-roulade'
    >>> check_name("product.name", "../etc/passwd")
    Traceback (most recent call last):
    ...
    procplan.errors.InvalidInputError: product.name = '../etc/passwd': allowed 1-64 characters a-z 0-9 . _ -, starting with a letter or digit
    """
    if not isinstance(name, str) or not NAME_PATTERN.match(name) or ".." in name:
        raise InvalidInputError(field, name, "1-64 characters a-z 0-9 . _ -, starting with a letter or digit")
    return name


def write_atomic(path: str | os.PathLike, text: str, *, overwrite: bool = False) -> Path:
    """Write ``text`` to ``path`` through a temporary file and a rename, so a crash never leaves half a file.

    Refuses to replace an existing file unless ``overwrite`` is true.
    """
    p = Path(path)
    if p.exists() and not overwrite:
        raise InvalidInputError(
            str(p), "exists", "a new file name, or overwrite=True", "refusing to replace a saved file"
        )
    p.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{p.name}.", suffix=".tmp", dir=p.parent)
    try:
        with os.fdopen(fd, "w", encoding="utf-8") as fh:
            fh.write(text)
            fh.flush()
            os.fsync(fh.fileno())
        if not overwrite:
            # link() fails if the target appeared meanwhile: no silent overwrite even under a race
            try:
                os.link(tmp, p)
            except FileExistsError:
                raise InvalidInputError(
                    str(p), "exists", "a new file name, or overwrite=True", "refusing to replace a saved file"
                ) from None
            except OSError:
                os.replace(tmp, p)
                return p
            os.unlink(tmp)
        else:
            os.replace(tmp, p)
    finally:
        if os.path.exists(tmp):
            os.unlink(tmp)
    return p
