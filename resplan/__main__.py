"""``python -m resplan``: the same as the ``resplan`` command."""

from .cli import main

if __name__ == "__main__":  # pragma: no cover
    main()
