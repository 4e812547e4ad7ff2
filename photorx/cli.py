"""The ``photorx`` command line (placeholder until the receiver stage lands)."""

from __future__ import annotations

import sys

__all__ = ["main"]


def main(argv=None) -> int:
    from . import __version__

    print(f"photorx {__version__}")
    return 0


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
