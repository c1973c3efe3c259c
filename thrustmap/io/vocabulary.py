"""Field-sheet words for features, slip senses and yes/no, mapped to canonical values.

Words are compared after lower-casing and turning runs of spaces, hyphens and
slashes into ``_``, so ``Axial plane``, ``axial-plane`` and ``AXIAL_PLANE`` match.
"""

from __future__ import annotations

import re
from collections.abc import Mapping

import numpy as np
from numpy.typing import ArrayLike, NDArray

__all__ = [
    "PLANE_FEATURES",
    "LINE_FEATURES",
    "FEATURE_WORDS",
    "SENSE_WORDS",
    "YES_NO_WORDS",
    "feature_kind",
    "canonical_words",
]

PLANE_FEATURES = (
    "bedding",
    "cleavage",
    "foliation",
    "fault",
    "thrust",
    "joint",
    "vein",
    "axial_plane",
)
LINE_FEATURES = ("hinge_line", "lineation", "slickenline", "intersection_lineation")

FEATURE_WORDS: dict[str, str] = {
    word: canonical
    for canonical, words in {
        "bedding": ("bedding", "bed", "beds", "s0", "so", "stratification"),
        "cleavage": ("cleavage", "cleav", "cl", "slaty_cleavage"),
        "foliation": ("foliation", "fol", "schistosity", "gneissosity"),
        "fault": ("fault", "flt", "fault_plane"),
        "thrust": ("thrust", "thrust_fault", "thrust_plane", "thr"),
        "joint": ("joint", "jt", "jnt"),
        "vein": ("vein", "vn"),
        "axial_plane": ("axial_plane", "axial_surface", "axial_planar_surface", "ap"),
        "hinge_line": ("hinge_line", "hinge", "fold_hinge", "fold_axis", "axis", "hl"),
        "lineation": ("lineation", "lin", "stretching_lineation", "mineral_lineation"),
        "slickenline": ("slickenline", "slickenlines", "slick", "striation", "striae", "stria"),
        "intersection_lineation": ("intersection_lineation", "intersection", "int_lin", "li"),
    }.items()
    for word in words
}

SENSE_WORDS: dict[str, str] = {
    word: canonical
    for canonical, words in {
        "reverse": ("reverse", "rev", "r", "thrust", "up_dip"),
        "normal": ("normal", "norm", "n", "down_dip"),
        "dextral": ("dextral", "dex", "d", "right_lateral", "rl"),
        "sinistral": ("sinistral", "sin", "s", "left_lateral", "ll"),
        "": ("", "?", "unknown", "u", "nd"),
    }.items()
    for word in words
}

YES_NO_WORDS: dict[str, bool] = {
    **dict.fromkeys(
        ("yes", "y", "true", "t", "1", "1.0", "x", "ot", "o", "overturned", "inverted"), True
    ),
    **dict.fromkeys(("no", "n", "false", "f", "0", "0.0", "", "upright"), False),
}

_SEP = re.compile(r"[\s\-/]+")


def feature_kind(features: ArrayLike) -> NDArray[np.object_]:
    """``"plane"`` or ``"line"`` for canonical feature names; ``""`` for anything else.

    Examples
    --------
    >>> feature_kind(["bedding", "hinge_line", "dyke"]).tolist()
    ['plane', 'line', '']
    """
    arr = np.asarray(features, dtype=object)
    kind = np.full(arr.shape, "", dtype=object)
    kind[np.isin(arr, PLANE_FEATURES)] = "plane"
    kind[np.isin(arr, LINE_FEATURES)] = "line"
    return kind


def canonical_words(
    texts: ArrayLike, words: Mapping[str, object]
) -> tuple[NDArray[np.object_], NDArray[np.bool_]]:
    """Look words up in a vocabulary, after normalising case and separators.

    Each distinct text is looked up once, so long columns with few distinct
    values cost little.

    Parameters
    ----------
    texts : array_like of str
        Stripped cell texts, ``""`` for empty cells.
    words : mapping
        Normalised word to canonical value.

    Returns
    -------
    values : ndarray of object
        Canonical values; ``None`` where the text is not in the vocabulary.
    known : ndarray of bool
        Whether the text was found.

    Examples
    --------
    >>> values, known = canonical_words(["Axial plane", "S0", "dyke"], FEATURE_WORDS)
    >>> values.tolist(), known.tolist()
    (['axial_plane', 'bedding', None], [True, True, False])
    """
    arr = np.asarray(texts, dtype=object)
    uniques, inverse = np.unique(arr.astype(str), return_inverse=True)
    looked = [words.get(_SEP.sub("_", u.strip().lower()).strip("_"), None) for u in uniques]
    known_u = np.array([v is not None for v in looked], dtype=bool)
    values_u = np.empty(len(looked), dtype=object)
    values_u[:] = looked
    return values_u[inverse].reshape(arr.shape), known_u[inverse].reshape(arr.shape)
