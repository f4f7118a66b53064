"""Room on disk: a write that would not fit stops before it starts, with an error the command line reports.

HDF5 does not recover from a write that fails half-way (a full disk, or the
file-size limit of ``ulimit -f``): the file's metadata are left inconsistent
and the library can crash the process. The chain file therefore checks the
room for each batch of steps before writing it, and a full disk ends the
run with exit 1 and the chain as it was after the last batch that fitted.
"""

import errno
import os
import resource
from pathlib import Path

#: errno values that mean "no room": disk full, file-size limit, quota.
NO_ROOM = frozenset({errno.ENOSPC, errno.EFBIG, errno.EDQUOT})


class NoRoom(OSError):
    """A write that would not fit on the disk or within the process's file-size limit."""


def require_room(path, nbytes):
    """Raise :class:`NoRoom` unless ``nbytes`` more can be written to ``path`` (free space and ``ulimit -f``).

    Parameters
    ----------
    path : Path
        The file to grow (it need not exist yet).
    nbytes : int
        Bytes about to be written.
    """
    path = Path(path)
    size = path.stat().st_size if path.exists() else 0
    limit = resource.getrlimit(resource.RLIMIT_FSIZE)[0]
    if limit != resource.RLIM_INFINITY and size + nbytes > limit:
        raise NoRoom(errno.EFBIG, f"{nbytes} more bytes would pass the file-size limit of {limit} bytes", str(path))
    stat = os.statvfs(path.parent)
    if nbytes > stat.f_bavail * stat.f_frsize:
        raise NoRoom(errno.ENOSPC, f"{nbytes} more bytes do not fit on the disk", str(path))
