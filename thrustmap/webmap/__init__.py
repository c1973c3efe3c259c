"""Self-contained offline web map: structural symbols on Leaflet's canvas, inlined assets."""

from thrustmap.webmap.page import map_html, write_map

__all__ = ["map_html", "write_map"]
