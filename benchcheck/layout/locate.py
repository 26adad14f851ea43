"""Find the line of a table or key in a layout's TOML text, for error messages.

tomllib gives no positions for valid documents, so this scans the text for table headers
(``[bench]``, ``[[element]]``, ``[mounts.post]``) and, inside one table, for ``key =``.
It only has to be right for the layouts people write; when unsure it returns the table's line.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

__all__ = ["SourceMap"]

_HEADER = re.compile(r"^\s*(\[\[?)\s*([A-Za-z0-9_.\-\" ]+?)\s*(\]\]?)\s*(#.*)?$")
_KEY = re.compile(r"^\s*([A-Za-z0-9_\-\"]+)\s*=")


@dataclass(frozen=True)
class _Table:
    name: str
    occurrence: int
    first_line: int  # 1-based line of the header (0 for the root table)
    last_line: int


class SourceMap:
    """Line numbers of tables and keys in one TOML text."""

    def __init__(self, text: str) -> None:
        self._lines = text.splitlines()
        tables: list[_Table] = []
        counts: dict[str, int] = {}
        current_name, current_occurrence, current_start = "", 0, 0
        for number, line in enumerate(self._lines, start=1):
            match = _HEADER.match(line)
            if not match:
                continue
            tables.append(_Table(current_name, current_occurrence, current_start, number - 1))
            name = match.group(2).replace('"', "").replace(" ", "")
            occurrence = counts.get(name, 0)
            counts[name] = occurrence + 1
            current_name, current_occurrence, current_start = name, occurrence, number
        tables.append(_Table(current_name, current_occurrence, current_start, len(self._lines)))
        self._tables = tables

    def table_line(self, name: str, occurrence: int = 0) -> int | None:
        """Line of the header of ``[name]`` (or the ``occurrence``-th ``[[name]]``)."""
        table = self._find(name, occurrence)
        return table.first_line or None if table else None

    def key_line(self, table_name: str, key: str, occurrence: int = 0) -> int | None:
        """Line of ``key = ...`` inside a table, else the table's own line."""
        table = self._find(table_name, occurrence)
        if table is None:
            return None
        for number in range(max(table.first_line, 1), table.last_line + 1):
            match = _KEY.match(self._lines[number - 1])
            if match and match.group(1).strip('"') == key:
                return number
        if table_name == "":
            # A top-level key may be written as a table header: [optics] or [optics.part].
            for other in self._tables:
                if other.name == key or other.name.startswith(key + "."):
                    return other.first_line
        # A dotted table such as [source] written as source.waist = ... at the root.
        return table.first_line or None

    def word_line(self, table_name: str, word: str, occurrence: int = 0) -> int | None:
        """First line inside a table that mentions ``word`` (for keys inside inline tables)."""
        table = self._find(table_name, occurrence)
        if table is None:
            return None
        pattern = re.compile(rf"\b{re.escape(word)}\b")
        for number in range(max(table.first_line, 1), table.last_line + 1):
            if pattern.search(self._lines[number - 1]):
                return number
        return table.first_line or None

    def _find(self, name: str, occurrence: int) -> _Table | None:
        for table in self._tables:
            if table.name == name and table.occurrence == occurrence:
                return table
        return None
