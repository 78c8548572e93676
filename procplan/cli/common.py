"""What every ``procplan`` sub-command shares: exit codes, loading the library, a plan and the site, JSON
output, and writing output files.

Exit codes: 0 done; 1 a check failed; 2 invalid input (bad arguments, plan, library or site file), with the
field named; 3 an internal error (a fault of procplan, to be reported).

Output files go through :func:`procplan.files.tomlfile.write_atomic`: a file is the old or the new version,
an existing file is replaced only with ``--force``, an input of the command is never overwritten, and ``-``
means standard output.
"""

from __future__ import annotations

import json
import os
import sys
from collections.abc import Iterable
from pathlib import Path
from typing import Any

EXIT_OK, EXIT_CHECK_FAILED, EXIT_INVALID, EXIT_INTERNAL = 0, 1, 2, 3
#: The file name that means standard output.
STDOUT = "-"


def check_options(args, **bounds: dict[str, Any]) -> None:
    """Each numeric option that is given must be a finite number inside its bounds (keyword arguments of
    :func:`procplan.validate.number`); the problem names the option as typed (``--samples``), before any work.

    >>> import argparse
    >>> check_options(argparse.Namespace(samples=0), samples={"minimum": 1})
    Traceback (most recent call last):
    ...
    procplan.errors.InvalidInputError: --samples = 0: allowed >= 1
    """
    from procplan import validate

    for attr, kw in bounds.items():
        value = getattr(args, attr, None)
        for v in value if isinstance(value, list | tuple) else [value]:
            if v is not None:
                validate.number("--" + attr.replace("_", "-"), v, **kw)


def library_path(args) -> str | None:
    """The library folder: ``--library``, else the ``PROCPLAN_LIBRARY`` environment variable, else None (the
    demo library)."""
    from procplan.files.library import LIBRARY_ENV

    return getattr(args, "library", None) or os.environ.get(LIBRARY_ENV) or None


def load_library_of(args):
    """The library named by ``--library`` or ``PROCPLAN_LIBRARY`` (default: the demo library)."""
    from procplan.files.library import load_library

    return load_library(library_path(args))


def output_target(
    field: str,
    value: str | None,
    *,
    force: bool = False,
    inputs: Iterable[Any] = (),
    suffix: str | None = None,
) -> Path | None:
    """Check an output file option before any work is done: None for ``-`` (standard output), else the path.

    Refuses (naming ``field``) a file that exists unless ``force``, any file the command reads (never, even
    with ``force``), a folder, a missing parent folder and, when ``suffix`` is given, another ending.
    """
    from procplan.errors import InvalidInputError

    if value == STDOUT:
        return None
    if not isinstance(value, str) or not value.strip():
        raise InvalidInputError(field, value, "a file name, or - for standard output")
    p = Path(value)
    if suffix is not None and p.suffix.lower() != suffix:
        raise InvalidInputError(field, value, f"a file name ending in {suffix}, or - for standard output")
    if not p.parent.is_dir():
        raise InvalidInputError(field, value, "a file in an existing folder", f"no folder {p.parent}")
    if p.is_dir():
        raise InvalidInputError(field, value, "a file name, not a folder")
    for source in inputs:
        if source is not None and Path(source).exists() and p.exists() and p.samefile(source):
            raise InvalidInputError(
                field, value, "a file the command does not read", "it is an input of this command"
            )
    if p.exists() and not force:
        raise InvalidInputError(
            field,
            value,
            "a new file name, or --force to replace it",
            "the file exists; refusing to overwrite",
        )
    return p


def write_output(target: Path | None, data: str | bytes, *, force: bool = False) -> str:
    """Write ``data`` atomically to ``target`` (a path from :func:`output_target`), or to standard output when
    ``target`` is None; returns where it went, for the message."""
    if target is None:
        if isinstance(data, bytes):
            sys.stdout.flush()
            sys.stdout.buffer.write(data)
            sys.stdout.buffer.flush()
        else:
            sys.stdout.write(data)
            sys.stdout.flush()
        return "standard output"
    from procplan.files.tomlfile import write_atomic

    write_atomic(target, data, overwrite=force)
    return str(target)


def info_stream(*outputs: str | None):
    """Where messages go: standard error when one of ``outputs`` (option values) is ``-``, so that standard
    output holds only the data; else standard output."""
    return sys.stderr if STDOUT in outputs else sys.stdout


def load_plan_of(path: str, lib):
    """A plan file, or the plan of that name in ``lib`` when no such file exists."""
    from procplan.files.plan import load_plan

    p = Path(path)
    if not p.exists() and lib is not None and path in lib.plans:
        p = lib.plans[path]
    return load_plan(p, library=lib)


def load_site_of(args, lib=None):
    """The site settings named by ``--site``, else the library's ``site.toml`` when it has one, else the demo
    plant's; checked against ``lib``."""
    from procplan.files.library import DEMO_LIBRARY
    from procplan.files.site import load_site

    path = getattr(args, "site", None)
    if path is None and lib is not None:
        own = Path(lib.root) / "site.toml"
        if own.is_file():
            path = own
        elif Path(lib.root).resolve() != DEMO_LIBRARY.resolve():
            print(f"note: no site.toml in {lib.root}; using the demo plant's site settings", file=sys.stderr)
    return load_site(path, library=lib)


def write_json(obj: Any, *, indent: int | None = None) -> None:
    """Write ``obj`` to stdout as one JSON document and a newline (NaN and infinity as null)."""
    from procplan.output.json_safe import json_safe

    json.dump(json_safe(obj), sys.stdout, ensure_ascii=False, indent=indent)
    sys.stdout.write("\n")
