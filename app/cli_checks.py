"""Subcommands of the checks group (placeholder until the issue that owns them lands)."""


def register(subparsers) -> None:
    """Add this group's subcommands to the ``stakeline`` parser."""
