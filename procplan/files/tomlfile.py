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
    except RecursionError:
        # tomllib recurses once per nested array or inline table; a few hundred levels exhaust the stack
        raise InvalidInputError(
            source, "nested too deeply", "TOML with arrays and tables nested a few levels deep"
        ) from None


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


def _exists_error(p: Path) -> InvalidInputError:
    return InvalidInputError(
        str(p), "exists", "a new file name, or overwrite (--force)", "refusing to replace a saved file"
    )


def _clean_leftovers(p: Path) -> None:
    """Remove temporaries of ``p`` left by an earlier write that was killed before its rename."""
    for stale in p.parent.glob(f".{p.name}.*.tmp"):
        try:
            stale.unlink()
        except OSError:
            pass


def _fsync_directory(directory: Path) -> None:
    """Make the rename itself durable (POSIX); a no-op where directories cannot be opened."""
    try:
        fd = os.open(directory, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def write_atomic(path: str | os.PathLike, data: str | bytes, *, overwrite: bool = False) -> Path:
    """Write ``data`` (text as UTF-8, or bytes) to ``path`` so that the file is always the old or the new version.

    A temporary file beside the target is written, flushed and fsynced, then renamed over the target (or
    hard-linked to it when replacing is not allowed, which fails if the target appeared meanwhile), and the
    directory is fsynced. The file gets the permissions the user's umask gives a new file (``mkstemp`` alone
    would leave 0600). Temporaries left by a killed earlier write are removed first. Refuses to replace an
    existing file unless ``overwrite`` is true.
    """
    p = Path(path)
    if p.exists() and not overwrite:
        raise _exists_error(p)
    p.parent.mkdir(parents=True, exist_ok=True)
    _clean_leftovers(p)
    payload = data.encode("utf-8") if isinstance(data, str) else bytes(data)
    fd, tmp = tempfile.mkstemp(prefix=f".{p.name}.", suffix=".tmp", dir=p.parent)
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(payload)
            fh.flush()
            os.fchmod(fh.fileno(), 0o666 & ~_umask())
            os.fsync(fh.fileno())
        if overwrite:
            os.replace(tmp, p)
        else:
            try:
                os.link(tmp, p)
            except FileExistsError:
                raise _exists_error(p) from None
            except OSError:  # a file system without hard links
                if p.exists():
                    raise _exists_error(p) from None
                os.replace(tmp, p)
        _fsync_directory(p.parent)
    finally:
        if os.path.exists(tmp):
            os.unlink(tmp)
    return p
