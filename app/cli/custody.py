"""``stakeline devices`` and ``stakeline salvage``: chain of custody and recovery of a store.

Each device signs its packages with its own key (see :mod:`stakeline.store.signing`).  The
office trusts a device once from its *device key file* (``devices export`` on the device,
``devices trust`` in the office); packages from devices it does not trust are held, not
merged, until it does (``devices trust`` then merges them).  A key is retired when its device
is replaced or lost (``devices retire``).  ``salvage`` copies what can still be read from a
damaged store into a new file, leaving the old one as it is.
"""

from __future__ import annotations

import json

import click
from stakeline.app.cli.base import CommandError, StakelineSubgroup, cli, shown
from stakeline.app.cli.inputs import input_file, store_file
from stakeline.app.cli.options import argument, json_option, option, store_option
from stakeline.app.cli.store import (
    EXIT_REJECTED,
    NEEDS_A_PERSON,
    existing_store,
    print_results,
    writable_store,
)
from stakeline.store import salvage as salvage_store
from stakeline.store.package import retry_held


def _state(device: dict) -> str:
    """A device key's state in words: own, trusted, not trusted, retired (lost)."""
    if device["retired_at"]:
        lost = ", lost" if device["lost"] else ""
        return f"retired {device['retired_at'][:19]} by {shown(device['retired_by'])}{lost}"
    if device["own"]:
        return "this store's own key"
    if device["trusted_at"]:
        return f"trusted {device['trusted_at'][:19]} by {shown(device['trusted_by'])}"
    return "not trusted"


@cli.group(
    "devices",
    cls=StakelineSubgroup,
    invoke_without_command=True,
    short_help="device signing keys: list them, export one, trust one, retire one",
    help="With --store, list the device keys STORE knows: its own, those it trusts (who "
    "trusted each and when) and those retired.  Subcommands: export (a device's public key "
    "file), trust (the office trusts a device, then merges its held packages), retire (a "
    "replaced or lost device's key).",
)
@option("--store", metavar="STORE", help="the store whose device keys to list")
@json_option(
    "print a JSON list of objects with keys device, public_key, fingerprint, created, own, "
    "trusted_by, trusted_at, retired_at, retired_by, lost, note"
)
@click.pass_context
def devices(ctx: click.Context, store: str | None, as_json: bool) -> int | None:
    """List the device keys of a store (or run a subcommand)."""
    if ctx.invoked_subcommand is not None:
        if store or as_json:
            raise CommandError(
                f"give --store after the subcommand: stakeline devices {ctx.invoked_subcommand} "
                "--store ..."
            )
        return None
    if not store:
        raise CommandError("give --store STORE to list its device keys, or a subcommand "
                           "(export, trust, retire); see stakeline devices --help")  # fmt: skip
    with existing_store(store, readonly=True) as opened:
        rows = opened.devices()
    if as_json:
        print(json.dumps(rows, indent=1))
        return 0
    if not rows:
        print("no device keys yet (a store makes its own on first use)")
    for row in rows:
        print(f"{row['fingerprint']}  {shown(row['device'])}  {_state(row)}")
    return 0


@devices.command(
    "export",
    short_help="write this device's public key file for the office to trust",
    help="Write the public key file of the device whose store is FIELD (its key is made now "
    "if it has none).  Copy the file to the office like a package, check its fingerprint "
    "with the device's owner, and run `stakeline devices trust FILE --into OFFICE`.  The "
    "private key never leaves the device.",
)
@store_option("FIELD", help="the device's store file")
@option("--out", required=True, metavar="FILE", help="the device key file to write")
def export_key(store: str, out: str) -> int:
    """Write the device key file."""
    with existing_store(store) as opened:
        key = opened.export_device_key(out)
    print(f"wrote {shown(key['path'])}: device {shown(key['device'])}, key {key['public_key']}")
    print(f"fingerprint {key['fingerprint']}: read it out to the office when it trusts the file")
    return 0


@devices.command(
    "trust",
    short_help="trust a device from its key file, then merge its held packages",
    help="Trust the device whose key file is FILE in the OFFICE store (created if absent): "
    "its packages merge from now on, and its packages held so far are verified again and "
    "merged.  Who trusted it (--by, default user@host) and when are recorded.  Exit 1 when "
    "some of its held packages still cannot merge (a conflict, say).",
)
@argument("key_file", "the device key file (from `stakeline devices export`)", metavar="FILE")
@option("--into", required=True, metavar="OFFICE", help="the office store file")
@option("--by", metavar="NAME", help="who trusts the device (default user@host)")
@json_option("print a JSON object: device (as in `devices --json`) and retried (as `import`)")
def trust(key_file: str, into: str, by: str | None, as_json: bool) -> int:
    """Trust a device, then retry its held packages."""
    input_file(key_file)
    with writable_store(into) as office:
        device = office.trust_device(key_file, by=by)
        waiting = {h["file_sha"] for h in office.held_packages()
                   if h["signer_key"] == device["public_key"]}  # fmt: skip
        retried = [r for r in retry_held(office) if r["file"].split(":", 1)[-1] in waiting]
    if as_json:
        print(json.dumps({"device": device, "retried": retried}, indent=1))
        return EXIT_REJECTED if any(r["status"] in NEEDS_A_PERSON for r in retried) else 0
    print(f"{device['fingerprint']}  {shown(device['device'])}  {_state(device)}")
    if not retried:
        print("no held packages of this device")
        return 0
    code = print_results(retried, as_json=False)
    merged = sum(r["status"] in ("imported", "updated", "present") for r in retried)
    print(f"{merged} of {len(retried)} held packages of this device merged")
    return code


@devices.command(
    "retire",
    short_help="retire a device's key (device replaced, or key lost)",
    help="Retire the key KEY (its fingerprint, public key, a start of it of 8 or more hex "
    "digits, or a device id with one key in use) in the OFFICE store.  Packages it signs from "
    "--at on (default now) are held.  With --lost (a stolen or lost device) every package of "
    "that key imported from now on is held, whatever time it claims.  A retired key is never "
    "trusted again: trust the device's new key file.",
)
@argument("key", "the key: fingerprint, public key or device id", metavar="KEY")
@store_option("OFFICE", help="the office store file")
@option("--lost", is_flag=True, help="the key may be in someone else's hands")
@option("--at", metavar="TIME", help="retired from this time (ISO 8601; default now)")
@option("--by", metavar="NAME", help="who retires it (default user@host)")
def retire(key: str, store: str, lost: bool, at: str | None, by: str | None) -> int:
    """Retire a device key."""
    with existing_store(store) as office:
        device = office.retire_device(key, by=by, lost=lost, at=at)
    print(f"{device['fingerprint']}  {shown(device['device'])}  {_state(device)}")
    return 0


@cli.command(
    "salvage",
    short_help="copy what can still be read from a damaged store into a new store file",
    help="Copy every record that can still be read from the store OLD (damaged, say) into "
    "the new store file NEW; OLD is only read, never changed.  Prints, per table, the rows "
    "copied and the rows that could not be read.  The new store makes its own signing key: "
    "export it and trust it again where its packages go.  Exit 1 when some rows could not be "
    "read.",
)
@store_option("OLD", help="the store to copy from (left as it is)")
@option("--into", required=True, metavar="NEW", help="the new store file (must not exist)")
@json_option("print a JSON object: source, target, tables {copied, unreadable}, orphans, check")
def salvage(store: str, into: str, as_json: bool) -> int:
    """Salvage a store into a new file."""
    store_file(store, f"no store file at {store}")
    found = salvage_store(store, into)
    lost = sum(t["unreadable"] for t in found["tables"].values())
    if as_json:
        print(json.dumps(found, indent=1))
        return EXIT_REJECTED if lost else 0
    print(f"copied from {shown(found['source'])} into {shown(found['target'])}:")
    for table, counts in found["tables"].items():
        print(f"  {table:<18} {counts['copied']:>9} copied  {counts['unreadable']:>6} unreadable")
    for table, count in found["orphans"].items():
        if count:
            print(f"  {count} {table} rows kept whose owner record was lost")
    print(f"new store check: {shown(found['check'])}")
    print("the new store has its own signing key: export it and trust it where its packages go")
    return EXIT_REJECTED if lost else 0
