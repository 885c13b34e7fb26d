"""Helper process for the concurrent-creation test: opens new stores when told to.

Usage: ``python tests/store/store_opener.py FOLDER TRIALS``.  For each trial k it prints
``ready k``, waits for the file ``FOLDER/go-k`` to appear, opens (creating) ``FOLDER/store-k.db``
at once and prints ``ok k`` or ``FAIL k ERROR``.  Several of these run at the same time, so
they all create and migrate the same new file together.
"""

from __future__ import annotations

import os
import sys
import time

from stakeline.store import Store


def main(folder: str, trials: int) -> None:
    """Open each trial's store when its go file appears; report each outcome on stdout."""
    for trial in range(trials):
        print(f"ready {trial}", flush=True)
        go = os.path.join(folder, f"go-{trial}")
        while not os.path.exists(go):
            time.sleep(0.0002)
        try:
            Store.open(os.path.join(folder, f"store-{trial}.db"), on_wait=None).close()
            print(f"ok {trial}", flush=True)
        except Exception as exc:  # noqa: BLE001 -- the parent reports whatever went wrong
            print(f"FAIL {trial} {type(exc).__name__}: {exc}".replace("\n", " "), flush=True)


if __name__ == "__main__":
    main(sys.argv[1], int(sys.argv[2]))
