"""``stakeline pack``, ``import``, ``demo`` and ``visits``: the store and office sync by file copy."""

from __future__ import annotations

import json
import os
import sqlite3

from stakeline.store import Store
from stakeline.store.package import SUFFIX, import_files, pack_visits

EXIT_REJECTED = 1
"""Exit code of ``import`` when any file was rejected or conflicts with the office copy."""


def _existing_store(path: str) -> Store:
    from stakeline.app.cli import CommandError

    if not os.path.isfile(path):
        raise CommandError(f"no store file at {path}; create one with 'stakeline demo' or the app")
    return Store.open(path)


def register(subparsers) -> None:
    """Add ``pack``, ``import``, ``demo`` and ``visits`` to the ``stakeline`` parser."""
    p = subparsers.add_parser(
        "pack",
        help="write one package file per finished visit into an outbox folder",
        description=f"Write every finished visit of STORE as a self-contained, checksummed "
        f"package file (*{SUFFIX}) into DIR, ready to copy to the office.  A package that "
        "is already there with the same content is left as it is.",
    )
    p.add_argument("--store", required=True, metavar="STORE", help="the field store file")
    p.add_argument("--outbox", required=True, metavar="DIR", help="folder for the packages")
    p.set_defaults(handler=run_pack)

    i = subparsers.add_parser(
        "import",
        help="merge visit packages into the office store",
        description="Verify and merge package files (or folders of them) into the OFFICE "
        "store, created if absent.  Importing a file again changes nothing.  Damaged, "
        "truncated, altered or foreign files are rejected and change nothing.  A visit "
        "changed on two devices keeps both copies and is reported as a conflict.  Exit 0 "
        "when every file was imported or already present, 1 when any was rejected or "
        "conflicts.",
    )
    i.add_argument("files", nargs="+", metavar="FILE", help="package files or folders")
    i.add_argument("--into", required=True, metavar="OFFICE", help="the office store file")
    i.add_argument("--json", action="store_true", help="print a JSON list, one object per file")
    i.set_defaults(handler=run_import)

    d = subparsers.add_parser(
        "demo",
        help="create a store holding the invented Tessaly Creek demo survey",
        description="Create STORE holding the demo survey (an invented creek: two "
        "cross-sections, one visited twice on the same benchmark).",
    )
    d.add_argument("--store", required=True, metavar="STORE", help="store file to create")
    d.set_defaults(handler=run_demo)

    v = subparsers.add_parser(
        "visits",
        help="list the visits in a store",
        description="List the visits in STORE: id, site, section, date, station count and "
        "whether the visit is finished.",
    )
    v.add_argument("--store", required=True, metavar="STORE", help="the store file")
    v.add_argument(
        "--json",
        action="store_true",
        help="print a JSON list of objects with keys uuid, site, section, date, "
        "station_count, finished",
    )
    v.set_defaults(handler=run_visits)

    c = subparsers.add_parser(
        "conflicts",
        help="list imported packages that conflict with the office copy",
        description="List the unresolved conflicts in the OFFICE store: packages of a visit "
        "(or its section or site) that was changed both in the office copy and on a device.",
    )
    c.add_argument("--store", required=True, metavar="OFFICE", help="the office store file")
    c.add_argument("--json", action="store_true", help="print a JSON list of conflicts")
    c.set_defaults(handler=run_conflicts)

    r = subparsers.add_parser(
        "resolve",
        help="resolve one conflict: keep the office copy, or merge the package's changes in",
        description="Resolve the conflict of the package whose checksum starts with CHECKSUM "
        "(at least 8 characters, from 'stakeline conflicts').  --keep office leaves the office "
        "copy as it is; --keep merge adds every change of the package that the office lacks "
        "after the office's own, so the package's corrections win.  Nothing is deleted.",
    )
    r.add_argument("checksum", metavar="CHECKSUM", help="start of the package checksum")
    r.add_argument("--store", required=True, metavar="OFFICE", help="the office store file")
    r.add_argument("--keep", required=True, choices=("office", "merge"), help="how to resolve it")
    r.set_defaults(handler=run_resolve)


def run_pack(args) -> int:
    """Pack every finished visit; one line per package."""
    from stakeline.app.cli import CommandError

    with _existing_store(args.store) as store:
        try:
            results = pack_visits(store, args.outbox)
        except OSError as exc:
            raise CommandError(f"cannot write packages to {args.outbox} ({exc.strerror})") from None
    for result in results:
        print(f"{result['status']:<9} {result['path']}")
    if not results:
        print("no finished visits to pack")
    return 0


def run_import(args) -> int:
    """Import package files into the office store; one line (or object) per file."""
    from stakeline.app.cli import CommandError

    if os.path.isdir(args.into):
        raise CommandError(f"{args.into} is a folder; give the office store file")
    with Store.open(args.into) as store:
        try:
            results = import_files(store, args.files)
        except (OSError, sqlite3.DatabaseError) as exc:
            raise CommandError(
                f"the office store failed ({exc}); files already imported stay imported, "
                "run the same import again"
            ) from None
    if not results:
        raise CommandError("no package files found in the given folders")
    if args.json:
        print(json.dumps(results, indent=1))
    else:
        for result in results:
            print(f"{result['file']}: {result['message']}")
    failed = any(r["status"] in ("rejected", "conflict") for r in results)
    return EXIT_REJECTED if failed else 0


def run_demo(args) -> int:
    """Create a store holding the demo survey."""
    from stakeline.app.cli import CommandError

    if os.path.exists(args.store):
        raise CommandError(f"{args.store} already exists; give a new store file name")
    with Store.open(args.store) as store:
        visits = store.load_demo()
    print(f"created {args.store} with {len(visits)} demo visits (invented data)")
    return 0


def run_visits(args) -> int:
    """List the visits of a store."""
    with _existing_store(args.store) as store:
        visits = store.visits()
    keys = ("uuid", "site", "section", "date", "station_count", "finished")
    if args.json:
        print(json.dumps([{k: v[k] for k in keys} for v in visits], indent=1))
        return 0
    if not visits:
        print("no visits")
    for row in visits:
        state = "finished" if row["finished"] else "open"
        state += ", conflict to resolve" if row["conflict"] else ""
        print(
            f"{row['uuid']}  {row['date']}  {row['site']} / {row['section']}  "
            f"{row['station_count']} stations  {state}"
        )
    return 0


def run_conflicts(args) -> int:
    """List unresolved conflicts."""
    with _existing_store(args.store) as store:
        conflicts = store.conflicts()
    if args.json:
        print(json.dumps(conflicts, indent=1))
        return 0
    if not conflicts:
        print("no conflicts to resolve")
    for entry in conflicts:
        print(f"{entry['file_sha'][:12]}  from {entry['device']}  {entry['reason']}")
    return 0


def run_resolve(args) -> int:
    """Resolve one conflict."""
    with _existing_store(args.store) as store:
        entry = store.resolve_conflict(args.checksum, keep=args.keep)
    print(f"{entry['file_sha'][:12]}: resolved ({args.keep})")
    return 0
