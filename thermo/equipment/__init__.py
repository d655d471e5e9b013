"""One module per kind of unit; each takes inlet flows and its specification
and returns a ``common.UnitOutcome`` (outlets, heat, work, balance, details)."""
