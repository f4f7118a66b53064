"""The ``planetfit`` command line: parses, calls the pipeline, prints.

Exit codes: 0 success, 2 bad input (one paragraph naming what is wrong and
the fix), 1 internal failure, 130 interrupted (resumable).
"""

import os
import signal
import sys
import traceback

from planetfit.core.errors import InputError
from planetfit.core.storage import NO_ROOM

EXIT_OK, EXIT_INTERNAL, EXIT_INPUT, EXIT_INTERRUPTED = 0, 1, 2, 130
#: Seconds between repeated KeyboardInterrupts after Ctrl-C or SIGTERM, until the run has stopped.
REPEAT_INTERRUPT_S = 0.5


def _resume_hint(args):
    """The command that continues an interrupted run."""
    if getattr(args, "command", None) not in ("run", "demo"):
        return "run the command again."
    out = f" --out {args.out}" if args.out else ""
    example = f" --example {args.example}" if getattr(args, "example", None) else ""
    target = f"run {args.config}" if args.command == "run" else f"demo{example}"
    from planetfit.pipeline import saved_progress

    config = getattr(args, "config_used", None) or getattr(args, "config", None)
    saved = saved_progress(config, args.out) if config is not None else None
    if saved is None:
        return f"nothing was sampled yet, so nothing is saved; start again with 'planetfit {target}{out} --force'."
    return f"{saved} hold the sampling so far; continue with 'planetfit {target} --resume{out}'."


def _no_room(args, exc):
    """The message for a full disk (or ``ulimit -f``): what was not written, what is kept, how to go on."""
    return (
        f"no room to write {exc.filename or 'a file'} ({exc.strerror}). Nothing written before is lost: a chain "
        "stops at its last saved step and other files are written whole or not at all. Fix: free disk space (or "
        f"raise the file-size limit), then {_resume_hint(args)}"
    )


#: The process that runs ``main``; forked workers have other ids.
MAIN_PID = os.getpid()


def _interrupted(signum, frame):
    """SIGINT and SIGTERM handler: stop the main process with KeyboardInterrupt; worker processes just end.

    Libraries print tracebacks of exceptions passing through them (emcee does
    for every log-probability call), so output is silenced until ``main``
    restores it and prints how to resume. Code that swallows the exception
    (a callback from compiled code) cannot keep the run going: a timer
    raises it again every half second until ``main`` has stopped.
    """
    if os.getpid() != MAIN_PID:
        signal.signal(signum, signal.SIG_DFL)
        os.kill(os.getpid(), signum)
    if signum != signal.SIGALRM:
        sys.stdout = sys.stderr = open(os.devnull, "w")  # noqa: SIM115 (closed by _restore)
        signal.setitimer(signal.ITIMER_REAL, REPEAT_INTERRUPT_S, REPEAT_INTERRUPT_S)
    raise KeyboardInterrupt


def _restore(streams):
    signal.setitimer(signal.ITIMER_REAL, 0)
    if sys.stderr is not streams[1]:
        sys.stderr.close()
    sys.stdout, sys.stderr = streams


def main(argv=None):
    """Entry point of the ``planetfit`` console script."""
    args = None
    streams = sys.stdout, sys.stderr
    previous = {sig: signal.signal(sig, _interrupted) for sig in (signal.SIGINT, signal.SIGTERM, signal.SIGALRM)}
    try:
        from planetfit.cli.parser import build_parser

        args = build_parser().parse_args(argv)
        code = args.func(args)
        if code is not None:
            return code
    except InputError as exc:
        print(f"planetfit: {exc.message()}", file=sys.stderr)
        return EXIT_INPUT
    except KeyboardInterrupt:
        _restore(streams)
        print(f"\nplanetfit: interrupted; {_resume_hint(args)}", file=sys.stderr)
        return EXIT_INTERRUPTED
    except SystemExit as exc:
        return exc.code if isinstance(exc.code, int) else EXIT_OK
    except Exception as exc:
        _restore(streams)  # an error while stopping after Ctrl-C must still be seen
        if isinstance(exc, OSError) and exc.errno in NO_ROOM:  # an honest exit 1: the machine's fault, not a bug
            print(f"planetfit: {_no_room(args, exc)}", file=sys.stderr)
            return EXIT_INTERNAL
        traceback.print_exc()
        print("planetfit: internal error (above); please report it with the config.", file=sys.stderr)
        return EXIT_INTERNAL
    finally:
        _restore(streams)
        for sig, handler in previous.items():
            signal.signal(sig, handler)
    return EXIT_OK


if __name__ == "__main__":
    sys.exit(main())
