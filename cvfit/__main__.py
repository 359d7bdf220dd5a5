"""``python -m cvfit``."""

from cvfit.cli import console_main

raise SystemExit(console_main())
