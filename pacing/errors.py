"""Errors the user can fix. Their message is one line, fit to show in the app or the CLI."""


class InputError(ValueError):
    """Bad input (a file, a number, a unit) that the user can correct."""
