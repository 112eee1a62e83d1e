"""``python -m secretary`` is the ``secretary`` command (the same commands, options and exit codes)."""
from secretary.cli import main

raise SystemExit(main())
