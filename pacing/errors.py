"""Errors the user can fix. Their message is one line, fit to show in the app or the CLI."""


class InputError(ValueError):
    """Bad input (a file, a number, a unit) that the user can correct."""


class ConflictError(RuntimeError):
    """A save or delete based on an out-of-date copy of a stored entry.

    Someone else (another browser session, another process) changed the entry since it was
    read; nothing was written. Reload the entry and try again. The message is one line.
    """


def first_line(error: BaseException) -> str:
    """The first line of an error's message, or its class name when it has none.

    Every surface shows one line per error (the page, the terminal); this is that line.

    >>> first_line(InputError("the file is empty\\n(details)"))
    'the file is empty'
    >>> first_line(ZeroDivisionError())
    'ZeroDivisionError'
    """
    text = str(error).strip()
    return text.splitlines()[0].strip() if text else type(error).__name__
