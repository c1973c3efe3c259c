"""Thrust network analysis: topology, hanging walls, transport, sheets, spacing and formation order.

The entry point is :func:`analyze_thrusts`, which takes the contract layers
(``thrust_traces``, ``study_area``, the attitude table and the age-constraint
table) and returns a :class:`ThrustAnalysis` whose ``layers()`` are the run
outputs ``thrust_traces``, ``thrust_sheets``, ``thrust_nodes``,
``spacing_scanlines``, ``spacing``, ``thrust_relations`` and ``thrust_rejected``.
"""

from thrustmap.thrusts.analysis import LAYER_NAMES, ThrustAnalysis, analyze_thrusts
from thrustmap.thrusts.transport import TransportDirection

__all__ = ["LAYER_NAMES", "ThrustAnalysis", "TransportDirection", "analyze_thrusts"]
