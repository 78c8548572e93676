"""What every ``procplan`` sub-command shares: exit codes, loading the library, a plan and the site, JSON output.

Exit codes: 0 done; 1 a check failed; 2 invalid input (bad arguments, plan, library or site file), with the
field named.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path
from typing import Any

EXIT_OK, EXIT_CHECK_FAILED, EXIT_INVALID = 0, 1, 2


def load_library_of(args):
    """The library named by ``--library`` (default: the demo library)."""
    from procplan.files.library import load_library

    return load_library(args.library)


def load_plan_of(path: str, lib):
    """A plan file, or the plan of that name in ``lib`` when no such file exists."""
    from procplan.files.plan import load_plan

    p = Path(path)
    if not p.exists() and lib is not None and path in lib.plans:
        p = lib.plans[path]
    return load_plan(p, library=lib)


def load_site_of(args, lib=None):
    """The site settings named by ``--site`` (default: the demo plant's), checked against ``lib``."""
    from procplan.files.site import load_site

    return load_site(args.site, library=lib)


def write_json(obj: Any, *, indent: int | None = None) -> None:
    """Write ``obj`` to stdout as one JSON document and a newline (NaN and infinity as null)."""
    from procplan.output.json_safe import json_safe

    json.dump(json_safe(obj), sys.stdout, ensure_ascii=False, indent=indent)
    sys.stdout.write("\n")
