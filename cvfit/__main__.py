"""``python -m cvfit``."""

from .cli import main

raise SystemExit(main())
