"""Errors raised for bad input.

An :class:`InputError` carries one line that names the file, the item and what was
expected; the command line prints it and exits with status 2.
"""


class InputError(Exception):
    """Bad user input (case file, artwork, drill file, command-line argument).

    Parameters
    ----------
    message : str
        The whole line shown to the user, e.g.
        ``"cases/x.toml: [[via]] #3: 'drill' must be a positive length, got -0.3"``.
    """


def input_error(source, item, message):
    """Build an :class:`InputError` with the project's one-line format.

    Parameters
    ----------
    source : str or os.PathLike
        File the bad value came from.
    item : str or None
        Table and item, e.g. ``"[[via]] #3"`` or ``"line 118"``; ``None`` for the whole file.
    message : str
        What was wrong and what was expected.

    Returns
    -------
    InputError

    Examples
    --------
    >>> str(input_error("x.toml", "[[via]] #3", "'drill' must be a positive length, got -0.3"))
    "x.toml: [[via]] #3: 'drill' must be a positive length, got -0.3"
    """
    parts = [str(source)] + ([item] if item else []) + [message]
    return InputError(": ".join(parts))
