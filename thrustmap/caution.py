"""The caution every output aimed at people carries (web map, review report)."""

__all__ = ["CAUTION"]

CAUTION = (
    "Interpretive aid only: these results must be reviewed by a qualified geologist before "
    "they inform any decision; local codes and licensed professional practice prevail."
)
