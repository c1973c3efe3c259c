"""A seeded generator of cylindrical folds with Fisher noise, for tests.

The noise comes from scipy.stats.vonmises_fisher (reference library); the fold
geometry is set by construction, so the true axis and interlimb angle are known.
"""

import numpy as np
from scipy import stats as sps

from thrustmap.orientation import line_to_vector, normal_to_plane


def synthetic_fold(seed, *, n=80, kappa=150.0, interlimb=None):
    """A cylindrical fold with Fisher noise: bedding, overturned flags and the truth.

    The axis is drawn at random (plunge 0-50); the two limbs' top normals lie
    in the profile plane at +-(180 - interlimb)/2 from the hinge normal, with a
    small symmetric spread along the girdle, and each normal is perturbed by
    von Mises-Fisher noise of precision kappa.
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
    limb = np.where(np.arange(n) % 2 == 0, 1.0, -1.0)
    psi = limb * half + np.radians(rng.uniform(-4, 4, n))
    normals = np.cos(psi)[:, None] * hinge + np.sin(psi)[:, None] * side
    # Fisher noise about the vertical, turned onto each normal (isotropic about it).
    z = sps.vonmises_fisher([0.0, 0.0, 1.0], kappa).rvs(n, random_state=rng)
    e1 = np.cross(normals, [0.3, 0.5, 0.8])
    e1 /= np.linalg.norm(e1, axis=1)[:, None]
    e2 = np.cross(normals, e1)
    noisy = z[:, :1] * e1 + z[:, 1:2] * e2 + z[:, 2:] * normals
    dd, dip = normal_to_plane(noisy)
    return dd, dip, noisy[:, 2] < 0, (trend, plunge, interlimb)
