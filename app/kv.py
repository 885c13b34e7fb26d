"""Kivy layout files (``.kv``) shipped inside the ``stakeline.app`` package."""

from __future__ import annotations

from importlib import resources

from kivy.lang import Builder


def load(name: str):
    """Load the layout file ``name`` (relative to ``stakeline.app``, e.g. ``"screens/home.kv"``).

    Read through :mod:`importlib.resources`, so it works from an installed wheel as from the
    checkout; returns what ``Builder.load_file`` returns (the file's root widget, if any).
    """
    resource = resources.files("stakeline.app").joinpath(name)
    with resources.as_file(resource) as path:
        return Builder.load_file(str(path))
