"""The ``trackwright`` command line: :mod:`.entry` (dispatch), :mod:`.stats`, :mod:`.export`, :mod:`.clean`.

Never imports Qt; the window is imported only when the command opens it.
"""
from .entry import main

__all__ = ["main"]
