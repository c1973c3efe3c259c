"""Canonical orientation cases shared by the test modules.

Each case is (name, dip_direction, dip) for planes or (name, trend, plunge) for
lines, chosen to hit the edges: horizontal, vertical, overturned-looking,
antipodal and wrap-around azimuths.
"""

import numpy as np

PLANES = [
    ("horizontal", 0.0, 0.0),
    ("vertical_ns", 90.0, 90.0),
    ("vertical_ew", 0.0, 90.0),
    ("gentle_east", 90.0, 10.0),
    ("steep_nw", 315.0, 80.0),
    ("wrap_north", 359.9, 45.0),
    ("moderate_sw", 225.0, 45.0),
]

LINES = [
    ("horizontal_north", 0.0, 0.0),
    ("horizontal_south", 180.0, 0.0),
    ("vertical", 0.0, 90.0),
    ("moderate_east", 90.0, 30.0),
    ("wrap", 359.5, 12.0),
]

# Antipodal pairs: the same axis written both ways (upper-hemisphere form first).
ANTIPODAL = [((10.0, -30.0), (190.0, 30.0)), ((200.0, -5.0), (20.0, 5.0))]

EMPTY = np.array([], dtype=float)
NAN = np.nan
