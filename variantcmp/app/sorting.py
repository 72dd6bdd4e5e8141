"""Sorting a screen's table, the same way on every screen: s / S step through the columns (from
the screen's first sort column, ending with catalogue order), r reverses, a header click sorts by
that column."""

from __future__ import annotations


class SortCycle:
    """Mixin for a screen with a sortable table. The screen keeps ``sort_key`` (a column key or
    None) and ``descending``, and gives ``FIRST_SORT`` (where the cycle starts),
    ``sort_columns()`` (the columns shown, in order; empty while there is nothing to sort),
    ``sort_column(key)`` and ``render_sorted()``."""

    FIRST_SORT = ""

    def _sort_step(self, step: int) -> None:
        columns = self.sort_columns()
        if not columns:
            return
        cycle: list[str | None] = [c.key for c in columns]
        start = cycle.index(self.FIRST_SORT)
        cycle = cycle[start:] + cycle[:start] + [None]  # ends with catalogue order
        position = cycle.index(self.sort_key) if self.sort_key in cycle else len(cycle) - 1
        self.sort_key = cycle[(position + step) % len(cycle)]
        self.descending = bool(self.sort_key and self.sort_column(self.sort_key).high_first)
        self.render_sorted()

    def sort_by(self, key: str) -> None:
        """A click on a column header: sort by it, or reverse where it is the sort already."""
        if key == self.sort_key:
            self.descending = not self.descending
        else:
            self.sort_key, self.descending = key, self.sort_column(key).high_first
        self.render_sorted()

    def action_sort_next(self) -> None:
        self._sort_step(1)

    def action_sort_previous(self) -> None:
        self._sort_step(-1)

    def action_reverse_sort(self) -> None:
        if self.sort_key is not None:
            self.descending = not self.descending
            self.render_sorted()
