"""The footer of keys, rebuilt only when the keys it lists change.

Textual's footer builds its keys again whenever the bindings might have
changed (every focus change, every edit); building them restyles a dozen
widgets, a few milliseconds each time typing moves the focus. This one
compares what it would list with what it lists and keeps it when equal."""

from __future__ import annotations

from textual.widgets import Footer


class KeyFooter(Footer):
    def __init__(self, **options) -> None:
        super().__init__(**options)
        self._listed: tuple | None = None

    def bindings_changed(self, screen) -> None:
        listed = tuple((key, active.binding.description, active.enabled)
                       for key, active in screen.active_bindings.items() if active.binding.show)
        if listed == self._listed:
            return
        if screen.app.app_focus and self.is_attached and screen is self.screen:
            self._listed = listed  # the footer rebuilds now (Footer.bindings_changed)
        super().bindings_changed(screen)
