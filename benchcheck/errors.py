"""Error types raised by benchcheck; the command line turns each into one message."""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["BenchcheckError", "LayoutError", "SamplingError", "PluginError", "place_text"]


class BenchcheckError(Exception):
    """Base of every error benchcheck raises on purpose (exit code 2 in the CLI)."""


def place_text(
    file: str | None,
    line: int | None,
    element: str | None,
    element_index: int | None,
    field: str | None,
) -> str:
    """Say where in a layout something is, as 'file:line, element 'L1' (#3), field 'z''."""
    parts = []
    if file:
        parts.append(f"{file}:{line}" if line else file)
    if element:
        parts.append(
            f"element '{element}' (#{element_index + 1})"
            if element_index is not None
            else f"'{element}'"
        )
    if field:
        parts.append(f"field '{field}'")
    return ", ".join(parts)


@dataclass
class LayoutError(BenchcheckError):
    """A layout file that cannot be used as written.

    Carries where the problem is (file, line, element name and index, field) and what
    would be valid, so the CLI can print one clear message.
    """

    message: str
    file: str | None = None
    line: int | None = None
    element: str | None = None
    element_index: int | None = None
    field: str | None = None
    hint: str | None = None

    def __post_init__(self) -> None:
        super().__init__(str(self))

    def __str__(self) -> str:
        where = place_text(self.file, self.line, self.element, self.element_index, self.field)
        text = f"{where}: {self.message}" if where else self.message
        if self.hint:
            text += f" ({self.hint})"
        return text


class SamplingError(BenchcheckError):
    """A wave stage that cannot sample its output plane meaningfully; says which plane and why."""


class PluginError(BenchcheckError):
    """A plugin that failed to load or registered something invalid; names the plugin."""
