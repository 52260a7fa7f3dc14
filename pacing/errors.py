"""Errors the user can fix. Their message is one line, fit to show in the app or the CLI."""


class InputError(ValueError):
    """Bad input (a file, a number, a unit) that the user can correct."""


class ConflictError(RuntimeError):
    """A save or delete based on an out-of-date copy of a stored entry.

    Someone else (another browser session, another process) changed the entry since it was
    read; nothing was written. Reload the entry and try again. The message is one line.
    """
