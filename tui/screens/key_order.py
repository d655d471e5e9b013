"""The footer's order of keys: help, save and quit first, so that a narrow
terminal (80 columns) still shows them, then the keys of the pane at hand,
then the rest. The command palette key keeps its place at the right."""

from __future__ import annotations

FIRST_ACTIONS = ("help", "save", "quit", "edit_field", "cancel_edit")


class KeysFirst:
    """Mixin for a Screen: its ``active_bindings`` (what the footer lists)
    in the order above, one key for each description shown."""

    @property
    def active_bindings(self):
        bindings = super().active_bindings

        def rank(item) -> int:
            action = item[1].binding.action
            if action.startswith("typed("):  # a letter key of the app (StatepathApp.action_typed)
                action = action[len("typed("):].strip("')\"")
            return FIRST_ACTIONS.index(action) if action in FIRST_ACTIONS else len(FIRST_ACTIONS)

        # One key per thing the footer names: "? Help", or "f1 Help" where a
        # text box takes the "?".
        listed, described = {}, set()
        for key, active in sorted(bindings.items(), key=rank):
            if active.binding.show:
                if active.binding.description in described:
                    continue
                described.add(active.binding.description)
            listed[key] = active
        return listed
