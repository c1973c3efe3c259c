"""Synthetic scenario generator: an invented fold-and-thrust belt with known answers.

Everything produced here is SYNTHETIC and marked so (layer descriptions,
station notes, ``truth.json`` ``"synthetic": true``). The scenario is a
deterministic forward model: thrusts with known spacing and formation order
(one out of sequence), hanging-wall folds with known axes and interlimb
angles, bedding sampled from the fold surfaces with Fisher-distributed noise,
a wedge-shaped elevation grid, and a field sheet in magnetic azimuths and
mixed notations with deliberate bad rows.
"""

from thrustmap.synth._scenario import Scenario, make_scenario, random_attitudes, write_scenario

__all__ = ["Scenario", "make_scenario", "write_scenario", "random_attitudes"]
