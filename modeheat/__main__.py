"""``python -m modeheat``: the same as the ``modeheat`` command."""

from .cli import main

__all__: list[str] = []

raise SystemExit(main())
