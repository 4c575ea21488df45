"""``python -m editor`` behaves exactly like the ``trackwright`` command."""
import sys

from .cli import main

sys.exit(main())
