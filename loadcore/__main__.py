"""``python -m loadcore``: the same as the ``loadcore`` command."""

from loadcore.cli import main

if __name__ == "__main__":
    raise SystemExit(main())
