"""The editors' door to the library files: validate a record with the file parsers of procplan.files (every
problem at once, each naming its field) and save it atomically to the library folder.

A record is edited as the plain mapping its file holds (file units: °C, minutes, mm); the parser that reads
the file is the one that judges the edit, so what the app accepts is what a file may hold.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

from procplan.errors import InvalidInputError
from procplan.ui.adapter import Outcome, Problem, library, library_root, problems_of


def _checked(parse, data: dict[str, Any]) -> Outcome:
    try:
        return Outcome(parse(data))
    except InvalidInputError as exc:
        return Outcome(problems=problems_of(exc))


def _saved(save) -> Outcome:
    try:
        return Outcome(str(save()))
    except InvalidInputError as exc:
        return Outcome(problems=problems_of(exc))
    except OSError as exc:
        return Outcome(problems=(Problem("library folder", library_root(), "a writable folder", str(exc)),))


def _exists(kind: str, name: str, overwrite: bool) -> None:
    if (Path(library_root()) / kind / f"{name}.toml").exists() and not overwrite:
        raise InvalidInputError(
            "name" if kind != "equipment" else "id",
            name,
            "a name not yet in the library, or tick 'replace the saved one'",
            "one of this name is already saved",
        )


# --- site ---------------------------------------------------------------------------------------------


def site_dict(generation: int = 0) -> dict[str, Any]:
    """The library folder's site settings as their file mapping (the defaults when it has none)."""
    from procplan.files.site import site_of_library, site_to_dict

    return site_to_dict(site_of_library(library_root(), library=library(generation)))


def check_site(data: dict[str, Any], generation: int = 0) -> Outcome:
    from procplan.files.site import site_from_dict

    return _checked(lambda d: site_from_dict(d, source="site", library=library(generation)), data)


def save_site(data: dict[str, Any], generation: int = 0) -> Outcome:
    """Validate and write ``site.toml`` of the library folder (atomically)."""
    from procplan.files.site import save_site as write

    checked = check_site(data, generation)
    if not checked.ok:
        return checked
    return _saved(lambda: write(library_root(), checked.value, library=library(generation)))


# --- rules ---------------------------------------------------------------------------------------------


def rule_dict(name: str, generation: int = 0) -> dict[str, Any]:
    from procplan.files.rules import rule_to_dict

    return rule_to_dict(library(generation).rules[name])


def check_rule(data: dict[str, Any]) -> Outcome:
    from procplan.files.rules import rule_from_dict

    return _checked(lambda d: rule_from_dict(d, "rule"), data)


def save_rule(data: dict[str, Any], overwrite: bool = False) -> Outcome:
    """Validate and write ``rules/NAME.toml`` (atomically); an existing rule only with ``overwrite``."""
    from procplan.files.library import save_rule as write
    from procplan.files.tomlfile import check_name

    checked = check_rule(data)
    if not checked.ok:
        return checked

    def save():
        check_name("name", checked.value.name)
        _exists("rules", checked.value.name, overwrite)
        return write(library_root(), checked.value, overwrite=overwrite)

    return _saved(save)


# --- machines ------------------------------------------------------------------------------------------


def machine_dict(machine_id: str, generation: int = 0) -> dict[str, Any]:
    from procplan.files.machines import equipment_to_dict

    return equipment_to_dict(library(generation).equipment[machine_id])


def check_machine(data: dict[str, Any]) -> Outcome:
    from procplan.files.machines import equipment_from_dict

    return _checked(lambda d: equipment_from_dict(d, "equipment"), data)


def save_machine(data: dict[str, Any], overwrite: bool = False) -> Outcome:
    """Validate and write ``equipment/ID.toml`` (atomically); an existing machine only with ``overwrite``."""
    from procplan.files.library import save_equipment as write
    from procplan.files.tomlfile import check_name

    checked = check_machine(data)
    if not checked.ok:
        return checked

    def save():
        check_name("id", checked.value.id)
        _exists("equipment", checked.value.id, overwrite)
        return write(library_root(), checked.value, overwrite=overwrite)

    return _saved(save)


def machine_kinds() -> dict[str, str]:
    """Machine kind → its medium (procplan.surface.ranges.EQUIPMENT_KINDS)."""
    from procplan.surface.ranges import EQUIPMENT_KINDS

    return {k: v.medium for k, v in EQUIPMENT_KINDS.items()}


def medium_settings(medium: str) -> tuple[tuple[str, ...], tuple[str, ...]]:
    """(required, optional) setting keys of a medium (procplan.surface.machines.MEDIA)."""
    from procplan.surface.machines import MEDIA

    m = MEDIA[medium]
    return tuple(m["required"]), tuple(m["optional"])


def setting_spec(key: str):
    """Unit, physical bounds and meaning of a setting (procplan.surface.machines.SETTINGS)."""
    from procplan.surface.machines import SETTINGS

    return SETTINGS[key]


def refrigerated_kinds() -> frozenset[str]:
    """Machine kinds that need evaporating and condensing temperatures."""
    from procplan.surface.machines import REFRIGERATED_KINDS

    return REFRIGERATED_KINDS
