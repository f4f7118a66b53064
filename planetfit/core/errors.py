"""The one exception type for user mistakes, and the translation of file-opening errors into it.

Every stage raises :class:`InputError` for problems the user can fix (a
config key, a data file, a run directory); the command line turns it into a
one-paragraph message and exit code 2. Anything else is an internal failure.
"""

import contextlib

#: The fix for a data file that is not where the config says.
DATA_FILE_MISSING_FIX = "check the 'file' path; relative paths are relative to the config file."


class InputError(Exception):
    """A problem in the user's input, with where it is and how to fix it.

    Parameters
    ----------
    problem : str
        What is wrong, in one sentence.
    file : str or os.PathLike, optional
        The file the problem is in.
    key : str, optional
        Dotted config key (``planets.b.period_days``) or a column name.
    line : int, optional
        1-based line number in ``file``.
    fix : str, optional
        What the user should do.
    """

    def __init__(self, problem, file=None, key=None, line=None, fix=None):
        self.problem = problem
        self.file = None if file is None else str(file)
        self.key = key
        self.line = line
        self.fix = fix
        super().__init__(self.message())

    def message(self):
        """Return the full one-paragraph message."""
        where = []
        if self.file:
            where.append(self.file + (f", line {self.line}" if self.line else ""))
        if self.key:
            where.append(f"key '{self.key}'")
        text = (": ".join([" ".join(where)]) + ": " if where else "") + self.problem
        if self.fix:
            text += f" Fix: {self.fix}"
        return text


@contextlib.contextmanager
def reading(
    path, what, missing_fix, unreadable_fix, unreadable=(IsADirectoryError, PermissionError, UnicodeDecodeError)
):
    """Turn a missing or unreadable user file into an :class:`InputError`.

    Parameters
    ----------
    path : Path
    what : str
        The kind of file, e.g. ``"data file"``.
    missing_fix, unreadable_fix : str
        The fixes to offer.
    unreadable : tuple of exception types
        Errors that mean the file exists but cannot be read.
    """
    try:
        yield
    except FileNotFoundError:
        raise InputError(f"{what} not found.", file=path, fix=missing_fix) from None
    except unreadable as exc:
        raise InputError(
            f"cannot read the {what} ({exc.__class__.__name__}: {exc}).", file=path, fix=unreadable_fix
        ) from None
