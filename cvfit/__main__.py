"""``python -m cvfit``."""

from cvfit.cli import main

raise SystemExit(main())
