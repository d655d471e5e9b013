"""The app's widgets, one to a file; helpers for them in ``cells`` and ``fields``."""
