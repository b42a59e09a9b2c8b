"""Child process for the crash and concurrency tests: import one file into a workspace.

usage: python workspace_importer.py WS_DIR FILE [--kill-at PHASE:N] [--pause SECONDS]

Prints each progress message, flushed. With ``--kill-at "stored a segment:3"`` the process sends
itself SIGKILL on the third progress message starting with that text (inside the transaction,
nothing is cleaned up). With ``--pause`` it sleeps after each message (a slow import).
"""

import argparse
import os
import signal
import sys
import time

from tracescreen.store import importing, workspace


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("ws")
    ap.add_argument("file")
    ap.add_argument("--kill-at", default="")
    ap.add_argument("--pause", type=float, default=0.0)
    ap.add_argument("--part-bytes", type=int, default=16384)
    args = ap.parse_args()
    importing.PART_BYTES = args.part_bytes  # many stored parts: many points inside the transaction
    phase, _, nth = args.kill_at.partition(":")
    seen = 0

    def progress(msg: str) -> None:
        nonlocal seen
        print(f"{time.monotonic():.6f} {msg}", flush=True)
        if phase and msg.startswith(phase):
            seen += 1
            if seen == int(nth or 1):
                os.kill(os.getpid(), signal.SIGKILL)
        time.sleep(args.pause)

    with workspace.open_workspace(args.ws) as ws:
        summary = ws.import_files([args.file], progress=progress)
    print("\n".join(summary.lines()), flush=True)
    sys.exit(0)


if __name__ == "__main__":
    main()
