"""A seeded generator of cylindrical folds with Fisher noise, for tests.

The noise comes from the Fisher (1953) sampler of thrustmap.synth (inverse CDF of
the angle to the mean, checked against mplstereonet's Fisher estimate in
tests/test_synth.py); the fold geometry is set by construction, so the true axis
and interlimb angle are known.
"""

import numpy as np

from thrustmap.orientation import line_to_vector, normal_to_plane
from thrustmap.synth._model import fisher


def synthetic_fold(seed, *, n=80, kappa=150.0, interlimb=None, limb_share=0.5, hinge_share=0.0):
    """A cylindrical fold with Fisher noise: bedding, overturned flags and the truth.

    The axis is drawn at random (plunge 0-50); the two limbs' top normals lie
    in the profile plane at +-(180 - interlimb)/2 from the hinge normal, with a
    small symmetric spread along the girdle, and each normal is perturbed by
    von Mises-Fisher noise of precision kappa. ``limb_share`` of the limb
    attitudes lie on the + limb (interleaved evenly); a fraction ``hinge_share`` of
    all attitudes (the last ones) come from the hinge zone instead, their
    normals spread uniformly between the limbs.
    """
    rng = np.random.default_rng(seed)
    trend, plunge = rng.uniform(0, 360), rng.uniform(0, 50)
    interlimb = rng.uniform(40, 150) if interlimb is None else interlimb
    axis = line_to_vector(trend, plunge)
    up = np.array([0.0, 0.0, 1.0])
    hinge = up - (up @ axis) * axis
    hinge /= np.linalg.norm(hinge)
    side = np.cross(axis, hinge)
    half = np.radians((180.0 - interlimb) / 2)
    i = np.arange(n)
    limb = np.where(
        np.floor((i + 1) * (1 - limb_share)) > np.floor(i * (1 - limb_share)), -1.0, 1.0
    )
    psi = limb * half + np.radians(rng.uniform(-4, 4, n))
    # Fisher noise about the vertical, turned onto each normal (isotropic about it).
    z = fisher(np.tile([0.0, 0.0, 1.0], (n, 1)), kappa, rng)
    n_hinge = int(round(hinge_share * n))
    if n_hinge:
        psi[n - n_hinge :] = rng.uniform(-half, half, n_hinge)
    normals = np.cos(psi)[:, None] * hinge + np.sin(psi)[:, None] * side
    e1 = np.cross(normals, [0.3, 0.5, 0.8])
    e1 /= np.linalg.norm(e1, axis=1)[:, None]
    e2 = np.cross(normals, e1)
    noisy = z[:, :1] * e1 + z[:, 1:2] * e2 + z[:, 2:] * normals
    dd, dip = normal_to_plane(noisy)
    return dd, dip, noisy[:, 2] < 0, (trend, plunge, interlimb)
