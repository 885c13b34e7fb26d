"""``python -m stakeline.app``: the same as the ``stakeline`` command."""

from stakeline.app.cli import main

raise SystemExit(main())
