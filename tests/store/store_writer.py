"""Helper process for the SIGKILL test: writes readings to a store as fast as it can.

Usage: ``python tests/store/store_writer.py STORE SEED``.  After each change has returned (and
so, by the store's contract, is committed durably) it prints one line to stdout:
``saved VERSION_UUID`` for a reading, correction or removal, ``undid VERSION_UUID`` for an undo.
The parent kills this process with SIGKILL at a random moment and checks every printed change.
"""

from __future__ import annotations

import random
import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from stakeline.store import Store  # noqa: E402


def main(path: str, seed: int) -> None:
    """Open the store, make sure one open visit exists, then change it until killed."""
    rng = random.Random(seed)
    store = Store.open(path, device_id="kill-writer")
    visit_uuid = store.get_setting("kill_visit")
    if visit_uuid is None:
        site = store.create_site("Kill test site")
        section = store.create_section(site["uuid"], "XS-K")
        visit = store.start_visit(section["uuid"], "2026-05-01", line_left=101.0, line_right=101.0)
        store.set_setting("kill_visit", visit["uuid"])
        visit_uuid = visit["uuid"]
    print("ready", flush=True)
    station = 0.0
    while True:
        roll = rng.random()
        if roll < 0.8:
            station += 0.25
            record = store.save_station(visit_uuid, station, rng.uniform(0.2, 2.0), note="k")
            print(f"saved {record['version']}", flush=True)
        elif roll < 0.95:
            current = store.stations(visit_uuid)[-5:]
            if current:
                target = rng.choice(current)
                if roll < 0.9:
                    record = store.correct_station(target["uuid"], reading=rng.uniform(0.2, 2.0))
                else:
                    record = store.remove_station(target["uuid"])
                print(f"saved {record['version']}", flush=True)
        else:
            undone = store.undo(visit_uuid)
            if undone is not None:
                print(f"undid {undone['version']}", flush=True)


if __name__ == "__main__":
    main(sys.argv[1], int(sys.argv[2]))
