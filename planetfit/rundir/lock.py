"""run.lock: one planetfit process at a time writes a run directory.

The lock is a small JSON file (process id, host, start time), written in
full and then hard-linked into place, so of two processes starting at once
only one gets it and no reader sees half a lock. A lock
left by a process that no longer runs on this host (killed with SIGKILL, a
crash of the machine) is taken over with a message; a lock of a live
process, or of another host (whose processes cannot be seen from here), is
refused with that process's id.
"""

import contextlib
import datetime
import json
import os
import socket

from planetfit.core.errors import InputError

LOCK_NAME = "run.lock"
_MAX_LOCK_BYTES = 4096


def _alive(pid):
    """Whether a process with this id runs on this machine."""
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:  # it exists, under another user
        return True
    return True


def holder(folder):
    """The lock's content ``{"pid", "host", "started_utc"}`` if it is held by another live process, else None."""
    path = folder / LOCK_NAME
    try:
        with open(path, "rb") as fh:
            info = json.loads(fh.read(_MAX_LOCK_BYTES))
        pid = int(info["pid"])
    except FileNotFoundError:
        return None
    except (OSError, ValueError, KeyError, TypeError):
        return {"pid": None, "host": "?", "started_utc": "?", "stale": True}
    if pid == os.getpid():
        return None
    if info.get("host") != socket.gethostname():
        return info
    return info if _alive(pid) else dict(info, stale=True)


def _refusal(folder, info):
    if info.get("host") != socket.gethostname():
        return InputError(
            f"the run directory is locked by process {info.get('pid')} on host '{str(info.get('host'))[:64]}' "
            f"(since {str(info.get('started_utc'))[:32]}).",
            file=folder / LOCK_NAME,
            fix="wait until that run has finished; if it no longer runs, delete run.lock and use --resume.",
        )
    return InputError(
        f"another planetfit process (pid {info['pid']}, started {str(info.get('started_utc'))[:32]}) is writing "
        "this run directory.",
        file=folder,
        fix=f"wait until it has finished, or stop it (kill {info['pid']}) and continue with --resume; "
        "or give this run another folder with --out.",
    )


def acquire(folder):
    """Take the lock of ``folder`` for this process; return a note if a stale lock was taken over, else None.

    Raises
    ------
    InputError
        If another live process (or a process of another host) holds it.
    """
    path = folder / LOCK_NAME
    mine = folder / f".{LOCK_NAME}.{os.getpid()}"
    mine.write_text(
        json.dumps(
            {
                "pid": os.getpid(),
                "host": socket.gethostname(),
                "started_utc": datetime.datetime.now(datetime.timezone.utc).isoformat(timespec="seconds"),
            }
        )
    )
    note = None
    try:
        for _ in range(2):
            try:
                os.link(mine, path)  # atomic, and fails if the lock exists: no reader sees a half-written lock
                return note
            except FileExistsError:
                info = holder(folder)
                if info is None:
                    return note  # ours already
                if not info.get("stale"):
                    raise _refusal(folder, info) from None
                note = (
                    f"took over the lock of process {info.get('pid')} (started "
                    f"{str(info.get('started_utc'))[:32]}), which no longer runs"
                )
                with contextlib.suppress(FileNotFoundError):
                    path.unlink()
    finally:
        mine.unlink()
    raise _refusal(folder, holder(folder) or {"pid": "?", "host": socket.gethostname()})


def release(folder):
    """Remove the lock if this process holds it."""
    path = folder / LOCK_NAME
    with contextlib.suppress(OSError, ValueError, KeyError, TypeError):
        if int(json.loads(path.read_bytes()[:_MAX_LOCK_BYTES])["pid"]) == os.getpid():
            path.unlink()


def refuse_if_locked(folder):
    """Raise :class:`InputError` if another live process is writing ``folder`` (for readers of a run)."""
    info = holder(folder)
    if info is not None and not info.get("stale"):
        raise _refusal(folder, info)
