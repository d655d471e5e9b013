"""The list of units: type, duty or power, entropy generation, lost work, flags."""

from __future__ import annotations

from typing import Mapping

from rich.text import Text

from thermo.quantities import display_units

from .cells import cell, flag_variants, flags_by_place, number
from .fitted_table import Column, FittedTable, header_unit
from .row_table import NamedRows


def unit_columns(system: str) -> tuple[Column, ...]:
    power = display_units("power", system)
    return (
        Column("name", "unit", shrink=1, min_width=8),
        Column("type", "type"),
        Column("energy", "duty/power", power, right=True),
        Column("sgen", "S gen", header_unit(display_units("entropy_rate", system)), right=True),
        Column("lost", "lost work", power, right=True),
        Column("flags", "flags"),
    )


class UnitTable(NamedRows, FittedTable):
    """Units of the solved sheet, in the file's order. Posts ``Picked`` and
    ``Opened`` like ``StreamTable``."""

    class Picked(NamedRows.Picked):
        """The cursor landed on the unit ``name``."""

    class Opened(NamedRows.Opened):
        """The unit ``name`` was chosen."""

    def show(self, result, document: Mapping, system: str) -> None:
        """Fill from ``result``; units the file holds but the solve did not
        reach are listed with dashes."""
        written = document.get("units") if isinstance(document.get("units"), Mapping) else {}
        places = flags_by_place(result)
        solved = result.units if result is not None else {}
        names = list(written) + [n for n in solved if n not in written]
        rows = []
        for name in names:
            unit = solved.get(name)
            table = written.get(name) if isinstance(written.get(name), Mapping) else {}
            type_name = unit.type if unit is not None else str(table.get("type", "?"))
            if unit is None:
                rows.append((name, [Text(name), type_name, "\u2014 ", "\u2014 ", "\u2014 ", Text("\u2026 not solved")]))
                continue
            energy = unit.power_W if unit.power_W is not None else unit.duty_W
            entered = "duty" in table and unit.duty_W is not None and unit.power_W is None
            rows.append((name, [
                Text(name, style="bold"),
                type_name,
                cell(number(energy, "power", system), entered),
                Text(number(unit.entropy_generation_W_K, "entropy_rate", system)),
                Text(number(unit.lost_work_W, "power", system)),
                flag_variants(places.get(name, [])),
            ]))
        self.fill(unit_columns(system), rows)
