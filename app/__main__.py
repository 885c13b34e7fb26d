"""``python -m app``: the same as the ``stakeline`` command."""

from app.cli import main

raise SystemExit(main())
