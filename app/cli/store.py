"""``stakeline pack``, ``import``, ``demo`` and ``visits``: the store and office sync by file copy."""

from __future__ import annotations

import json
import os

import click
from stakeline.app.cli.base import CommandError, cli, shown
from stakeline.app.cli.inputs import not_regular, store_file
from stakeline.app.cli.options import argument, json_option, option, store_option
from stakeline.app.cli.progress import Progress
from stakeline.store import Store
from stakeline.store.package import SUFFIX, import_files, pack_visits

EXIT_REJECTED = 1
"""Exit code of ``import`` (and ``devices trust``) when any file was rejected, held or
conflicts with the office copy: a person has something to look at."""

NEEDS_A_PERSON = ("rejected", "conflict", "held")
"""Import statuses that make the exit code :data:`EXIT_REJECTED`."""


def existing_store(path: str, readonly: bool = False) -> Store:
    """The existing store file at ``path`` (read-only for commands that only read, so they
    work on a read-only file system too)."""
    store_file(path, f"no store file at {path}; create one with 'stakeline demo' or the app")
    if not readonly:
        refuse_read_only_file_system(path)
    return Store.open(path, readonly=readonly)


def writable_store(path: str) -> Store:
    """The store file at ``path`` for writing, created when absent (the office store)."""
    kind = "a folder" if os.path.isdir(path) else not_regular(path)
    if kind is not None:
        raise CommandError(f"{path} is {kind}; give the office store file")
    refuse_read_only_file_system(path)
    return Store.open(path)


def refuse_read_only_file_system(path: str) -> None:
    """A one-line refusal when the store at ``path`` sits on a file system mounted read-only
    (SQLite would only say it cannot open the file)."""
    folder = os.path.dirname(os.path.abspath(path))
    try:
        read_only = bool(os.statvfs(folder).f_flag & os.ST_RDONLY)
    except (OSError, AttributeError):  # no such folder (made later), or no statvfs here
        return
    if read_only:
        raise CommandError(
            f"{path} is on a read-only file system: this command writes to the store, which "
            "cannot be done there; commands that only read it still work -- copy the store "
            "to a writable folder to change it"
        )


def print_results(results: list[dict], as_json: bool) -> int:
    """Print import results, one line (or JSON object) per file; the exit code they make."""
    if as_json:
        print(json.dumps(results, indent=1))
    else:
        for result in results:
            print(f"{shown(result['file'])}: {shown(result['message'])}")
    return EXIT_REJECTED if any(r["status"] in NEEDS_A_PERSON for r in results) else 0


@cli.command(
    "pack",
    short_help="write one package file per finished visit into an outbox folder",
    help=f"Write every finished visit of STORE as a self-contained, checksummed "
    f"package file (*{SUFFIX}) into DIR, ready to copy to the office.  A package that "
    "is already there with the same content is left as it is.",
)
@store_option(help="the field store file")
@option("--outbox", required=True, metavar="DIR", help="folder for the packages")
def pack(store: str, outbox: str) -> int:
    """Pack every finished visit; one line per package."""
    with existing_store(store) as opened, Progress("packing") as progress:
        try:
            results = pack_visits(opened, outbox, progress=progress.callback)
        except OSError as exc:
            raise CommandError(f"cannot write packages to {outbox} ({exc.strerror})") from None
    for result in results:
        print(f"{result['status']:<9} {shown(result['path'])}")
    if not results:
        print("no finished visits to pack")
    return 0


@cli.command(
    "import",
    short_help="merge visit packages into the office store",
    help="Verify and merge package files (or folders of them) into the OFFICE "
    "store, created if absent.  Importing a file again changes nothing.  Damaged, "
    "truncated or foreign files are rejected and change nothing.  A package from a device "
    "the office does not trust (see `stakeline devices trust`), or changed after it was "
    "signed, is held: kept whole, not merged, listed by `stakeline conflicts`.  A visit "
    "changed on two devices keeps both copies and is reported as a conflict.  Exit 0 "
    "when every file was imported or already present, 1 when any was rejected, held or "
    "conflicts.",
)
@argument("files", "package files or folders", nargs=-1, required=True, metavar="FILE...")
@option("--into", required=True, metavar="OFFICE", help="the office store file")
@json_option("print a JSON list, one object per file")
def import_packages(files: tuple[str, ...], into: str, as_json: bool) -> int:
    """Import package files into the office store; one line (or object) per file."""
    with writable_store(into) as store, Progress("importing") as progress:
        try:
            results = import_files(store, files, progress=progress.callback)
        except OSError as exc:  # a folder that cannot be listed, say; the store is not at fault
            raise CommandError(
                f"cannot read {exc.filename or 'the files'} ({exc.strerror or exc}); files "
                "imported before it stay imported"
            ) from None
    if not results:
        raise CommandError("no package files found in the given folders")
    return print_results(results, as_json)


@cli.command(
    "demo",
    short_help="create a store holding the invented Tessaly Creek demo survey",
    help="Create STORE holding the demo survey (an invented creek: two "
    "cross-sections, one visited twice on the same benchmark).",
)
@store_option(help="store file to create")
def demo(store: str) -> int:
    """Create a store holding the demo survey."""
    if os.path.lexists(store):
        raise CommandError(f"{store} already exists; give a new store file name")
    with Store.open(store) as opened:
        visits = opened.load_demo()
    print(f"created {store} with {len(visits)} demo visits (invented data)")
    return 0


@cli.command(
    "visits",
    short_help="list the visits in a store",
    help="List the visits in STORE: id, site, section, date, station count and "
    "whether the visit is finished.",
)
@store_option(help="the store file")
@json_option(
    "print a JSON list of objects with keys uuid, site, section, date, station_count, finished"
)
def visits(store: str, as_json: bool) -> int:
    """List the visits of a store."""
    with existing_store(store, readonly=True) as opened:
        rows = opened.visits()
    keys = ("uuid", "site", "section", "date", "station_count", "finished")
    if as_json:
        print(json.dumps([{k: v[k] for k in keys} for v in rows], indent=1))
        return 0
    if not rows:
        print("no visits")
    for row in rows:
        state = "finished" if row["finished"] else "open"
        state += ", conflict to resolve" if row["conflict"] else ""
        print(
            f"{shown(row['uuid'])}  {shown(row['date'])}  {shown(row['site'])} / "
            f"{shown(row['section'])}  {row['station_count']} stations  {state}"
        )
    return 0


@cli.command(
    "conflicts",
    short_help="list packages that need a person: conflicts and held packages",
    help="List the unresolved conflicts in the OFFICE store (packages of a visit, or its "
    "section or site, changed both in the office copy and on a device) and the held "
    "packages (kept whole but not merged: unsigned, changed after signing, or from a device "
    "the office does not trust or has retired), each with its status and reason.",
)
@store_option("OFFICE", help="the office store file")
@json_option(
    "print a JSON list: the conflicts, then the held packages (status 'held', with signer_key "
    "and fingerprint)"
)
def conflicts(store: str, as_json: bool) -> int:
    """List unresolved conflicts and held packages."""
    with existing_store(store, readonly=True) as opened:
        entries = opened.conflicts() + opened.held_packages()
    if as_json:
        print(json.dumps(entries, indent=1))
        return 0
    if not entries:
        print("no conflicts to resolve")
    for entry in entries:
        print(
            f"{entry['file_sha'][:12]}  {entry['status']:<8}  from {shown(entry['device'])}  "
            f"{shown(str(entry['reason'] or '').removeprefix('held: '))}"
        )
    return 0


@cli.command(
    "resolve",
    short_help="resolve one conflict: keep the office copy, or merge the package's changes in",
    help="Resolve the conflict of the package whose checksum starts with CHECKSUM "
    "(at least 8 characters, from 'stakeline conflicts').  --keep office leaves the office "
    "copy as it is; --keep merge adds every change of the package that the office lacks "
    "after the office's own, so the package's corrections win.  Nothing is deleted.",
)
@argument("checksum", "start of the package checksum", metavar="CHECKSUM")
@store_option("OFFICE", help="the office store file")
@option("--keep", required=True, type=click.Choice(["office", "merge"]),
        help="how to resolve it")  # fmt: skip
def resolve(checksum: str, store: str, keep: str) -> int:
    """Resolve one conflict."""
    with existing_store(store) as opened:
        entry = opened.resolve_conflict(checksum, keep=keep)
    print(f"{entry['file_sha'][:12]}: resolved ({keep})")
    return 0
