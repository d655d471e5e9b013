"""The app's screens and dialogs."""
