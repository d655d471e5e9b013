"""The top line: which file, whether it has unsaved edits, the equation of
state and the display units; the sheet's title where there is room."""

from __future__ import annotations

from rich.text import Text
from textual.widget import Widget

from thermo.quantities import display_units

MODEL_NAMES = {
    "peng-robinson": "Peng-Robinson",
    "soave-redlich-kwong": "Soave-Redlich-Kwong",
    "virial": "virial (truncated)",
    "ideal-gas": "ideal gas",
}
SYSTEM_NAMES = {"SI": "SI", "metric": "metric engineering", "US": "US customary"}


class Banner(Widget):
    """``statepath │ let-down.toml ✎ unsaved │ EOS Peng-Robinson │ units metric ...``
    The unit names in brackets go first when the line is short of room (the
    table headers carry them too), then the title is cut with an ellipsis."""

    DEFAULT_CSS = "Banner { height: 1; }"

    def __init__(self, *args, **options) -> None:
        super().__init__(**options)
        self._shown: tuple = ("no sheet", "", False, "", "metric")

    def show(self, name: str, title: str, dirty: bool, model: str, system: str) -> None:
        shown = (name, title, dirty, model, system)
        if shown != self._shown:
            self._shown = shown
            self.refresh()

    def render(self) -> Text:
        name, title, dirty, model, system = self._shown
        width = self.size.width or self.app.size.width
        head = Text()
        head.append(" statepath ", style="bold reverse")
        head.append(f" {name}", style="bold")
        if dirty:
            head.append(" \u270e unsaved", style="bold yellow")
        else:
            head.append(" \u2714 saved", style="dim")
        if not model:  # no sheet open
            return head
        head.append("  \u2502 EOS ", style="dim")
        head.append(MODEL_NAMES.get(model, model))
        units = ", ".join(display_units(kind, system) for kind in ("temperature", "pressure", "molar_flow"))
        system_name = SYSTEM_NAMES.get(system, system)
        for unit_text in (f"{system_name} ({units})", system_name, system):
            line = head.copy()
            line.append("  \u2502 units ", style="dim")
            line.append(unit_text)
            if line.cell_len <= width:
                break
        if title:
            line.append(f"  \u2502 {title}", style="italic dim")
        line.truncate(width, overflow="ellipsis")
        return line
