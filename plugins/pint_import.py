"""pint, imported without pulling in numpy and scipy.

pint imports numpy and scipy whenever they are installed (``pint.compat``), which costs
most of a second at every start-up although oleotrace only converts plain numbers. Hiding
them for the length of pint's own import leaves pint on its pure-Python path; numpy and
scipy still import normally afterwards for the statistics. If numpy is already loaded (a
worker that ran a scan first), pint simply sees it: both paths convert numbers alike.
"""
from __future__ import annotations

import sys

_HIDDEN = ("numpy", "scipy")


def _import_pint():
    if "pint" in sys.modules:
        return sys.modules["pint"]
    hidden = [name for name in _HIDDEN if name not in sys.modules]
    for name in hidden:
        sys.modules[name] = None  # type: ignore[assignment]  # makes "import numpy" raise ImportError
    try:
        import pint
    finally:
        for name in hidden:
            if sys.modules.get(name, 0) is None:
                del sys.modules[name]
    return pint


pint = _import_pint()
