"""Bounded reading of user files: regular files only, a size cap, and short printable excerpts in messages.

A device (``/dev/zero``) or a FIFO named as a data file would be read
forever or wait forever; a huge table takes many times its size in memory.
Both are refused before the file is opened. Messages quote a file's text
only as a short excerpt with unprintable characters escaped.
"""

import os
import stat

from planetfit.core.errors import DATA_FILE_MISSING_FIX, InputError

#: Default cap on a data table (text or FITS), in MB; a dataset's ``max_file_mb`` lifts it.
MAX_TABLE_MB = 50.0
#: Characters of a file's text a message quotes at most.
EXCERPT_CHARS = 32
_MB = 1024 * 1024


def excerpt(text, limit=EXCERPT_CHARS):
    """``text`` for a message: unprintable characters escaped, cut to ``limit`` characters with an ellipsis."""
    text = str(text)
    short = text[:limit]
    shown = "".join(c if c.isprintable() else repr(c)[1:-1] for c in short)
    return shown + ("..." if len(text) > limit else "")


def excerpts(values, limit=8):
    """Up to ``limit`` values as :func:`excerpt` joined by commas, with the count of the rest."""
    values = list(values)
    shown = ", ".join(excerpt(v) for v in values[:limit])
    return shown + (f" and {len(values) - limit} more" if len(values) > limit else "")


def check_readable(path, what, max_mb, key=None, lift=None):
    """Refuse a missing path, a folder, anything but a regular file, and a file above ``max_mb`` MB.

    Parameters
    ----------
    path : Path
    what : str
        The kind of file for the message ("data file", "config file").
    max_mb : float
    key : str, optional
        The config key the message names.
    lift : str, optional
        How to lift the cap (the fix); None if it cannot be lifted.
    """
    try:
        info = os.stat(path)  # never opens the file: a FIFO would wait for a writer
    except FileNotFoundError:
        raise InputError(f"{what} not found.", file=path, key=key, fix=DATA_FILE_MISSING_FIX) from None
    except OSError as exc:
        raise InputError(
            f"cannot reach the {what} ({exc.strerror}).", file=path, key=key, fix=DATA_FILE_MISSING_FIX
        ) from None
    if stat.S_ISDIR(info.st_mode):
        raise InputError(f"the {what} is a folder.", file=path, key=key, fix="name a file inside it.")
    if not stat.S_ISREG(info.st_mode):
        raise InputError(
            f"the {what} is not a regular file (a device, FIFO or socket): reading it could wait or run forever.",
            file=path,
            key=key,
            fix="copy the content into an ordinary file and name that file.",
        )
    if info.st_size > max_mb * _MB:
        raise InputError(
            f"the {what} holds {info.st_size / _MB:.3g} MB, above the {max_mb:g} MB planetfit reads without being "
            "asked (a table takes several times its size in memory).",
            file=path,
            key=key,
            fix=lift or "give a smaller file.",
        )
