"""The top line: which file, whether it has unsaved edits, the equation of
state and the display units."""

from __future__ import annotations

from rich.text import Text
from textual.widgets import Static

from thermo.quantities import display_units

MODEL_NAMES = {
    "peng-robinson": "Peng-Robinson",
    "soave-redlich-kwong": "Soave-Redlich-Kwong",
    "virial": "virial (truncated)",
    "ideal-gas": "ideal gas",
}
SYSTEM_NAMES = {"SI": "SI", "metric": "metric engineering", "US": "US customary"}


class Banner(Static):
    """``statepath │ let-down.toml ✎ unsaved │ EOS Peng-Robinson │ units metric ...``"""

    def show(self, name: str, title: str, dirty: bool, model: str, system: str) -> None:
        text = Text()
        text.append(" statepath ", style="bold reverse")
        text.append(f" {name}", style="bold")
        if dirty:
            text.append(" \u270e unsaved", style="bold yellow")
        else:
            text.append(" \u2714 saved", style="dim")
        text.append("  \u2502 EOS ", style="dim")
        text.append(MODEL_NAMES.get(model, model))
        units = ", ".join(display_units(kind, system) for kind in ("temperature", "pressure", "molar_flow"))
        text.append("  \u2502 units ", style="dim")
        text.append(f"{SYSTEM_NAMES.get(system, system)} ({units})")
        if title:
            text.append(f"  \u2502 {title}", style="italic dim")
        self.update(text)
