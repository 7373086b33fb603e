"""``python -m modeheat``: the same as the ``modeheat`` command."""

from .cli import main

__all__: list[str] = []

# The guard matters: worker processes started by "spawn" or "forkserver" import this
# module again, and must not run the command a second time.
if __name__ == "__main__":
    raise SystemExit(main())
