"""Errors raised at the input edge.

Every problem names where it was found (file, line or field) and what was
expected, so the command line can print one plain line per problem.
"""

from __future__ import annotations


class InputError(Exception):
    """One or more problems with user input; ``problems`` holds one line each."""

    def __init__(self, problems: str | list[str]):
        self.problems = [problems] if isinstance(problems, str) else list(problems)
        super().__init__("\n".join(self.problems))


class Problems:
    """Collects input problems so a user sees all of them at once, not one per run."""

    def __init__(self, where: str):
        self.where = where
        self.items: list[str] = []

    def add(self, field: str, message: str) -> None:
        self.items.append(f"{self.where}: {field}: {message}")

    def raise_if_any(self) -> None:
        if self.items:
            raise InputError(self.items)
