"""``python -m dropkin``: the same as the ``dropkin`` command."""

from dropkin.cli import run

if __name__ == "__main__":
    run()
