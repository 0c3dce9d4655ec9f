"""How networks of parts are written for people (kept free of numpy: the window's
headers load it before the first paint)."""

from __future__ import annotations

SERIES_WORD, PARALLEL_WORD = "ser", "par"
"""How a network is written: ``47 nF ser 1 µF`` is two capacitors in series (45 nF),
``47 nF par 1 µF`` two in parallel (1.047 µF). Words, not ``+``, which reads as "added"
and is right for only one of the two kinds of part."""
NOTATION = (f"{SERIES_WORD} = in series, {PARALLEL_WORD} = in parallel: 10 kΩ {SERIES_WORD} "
            f"4.7 kΩ is 14.7 kΩ, 47 nF {SERIES_WORD} 1 µF is 45 nF")
"""The legend printed wherever networks are written out."""
