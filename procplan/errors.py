"""The one exception type for invalid input, and a collector that reports every problem at once."""

from __future__ import annotations

from collections.abc import Iterable
from typing import Any


class InvalidInputError(ValueError):
    """Invalid input: names the field, the value given and what is allowed.

    >>> str(InvalidInputError("product.diameter_mm", -3, "> 0 mm"))
    'product.diameter_mm = -3: allowed > 0 mm'
    """

    def __init__(self, field: str, value: Any, allowed: str, detail: str | None = None) -> None:
        self.field = field
        self.value = value
        self.allowed = allowed
        self.detail = detail
        text = f"{field} = {value!r}: allowed {allowed}"
        if detail:
            text += f" ({detail})"
        super().__init__(text)


class ValidationErrors(InvalidInputError):
    """Several invalid-input problems found in one file or form, reported together."""

    def __init__(self, problems: Iterable[InvalidInputError], source: str = "input") -> None:
        self.problems = list(problems)
        self.source = source
        lines = [f"{len(self.problems)} problem(s) in {source}:"] + [f"  - {p}" for p in self.problems]
        ValueError.__init__(self, "\n".join(lines))
        self.field = ", ".join(p.field for p in self.problems)
        self.value = None
        self.allowed = "see the listed problems"
        self.detail = None


class Collector:
    """Gathers problems so that validation reports all of them, not only the first.

    >>> c = Collector("plan.toml")
    >>> with c.catch():
    ...     raise InvalidInputError("start.temperature_C", 400, "-40 to 150 °C")
    >>> len(c.problems)
    1
    """

    def __init__(self, source: str = "input") -> None:
        self.source = source
        self.problems: list[InvalidInputError] = []

    def add(self, problem: InvalidInputError) -> None:
        if isinstance(problem, ValidationErrors):
            self.problems.extend(problem.problems)
        else:
            self.problems.append(problem)

    def catch(self) -> _Catch:
        return _Catch(self)

    def raise_if_any(self) -> None:
        if len(self.problems) == 1:
            raise self.problems[0]
        if self.problems:
            raise ValidationErrors(self.problems, self.source)


class _Catch:
    def __init__(self, collector: Collector) -> None:
        self.collector = collector

    def __enter__(self) -> None:
        return None

    def __exit__(self, exc_type, exc, tb) -> bool:
        if exc is not None and isinstance(exc, InvalidInputError):
            self.collector.add(exc)
            return True
        return False
