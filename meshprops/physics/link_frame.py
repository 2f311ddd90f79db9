"""A mesh's mass properties expressed in the frame of the link that holds it.

A model places a mesh in a link with a scale ``s`` (per axis, applied to the
file's coordinates) and a rigid placement ``(R, t)``: a file vertex ``v`` lies at
``x = R (S v) + t`` in the link frame, ``S = diag(s)``. For a uniform solid of
fixed density the mass properties follow exactly:

* scale: mass ``m' = |det S| m``; centre of mass ``c' = S c``; with the mass
  covariance about the centre of mass ``C = ∫ (x − c)(x − c)ᵀ dm = ½ tr(I) E − I``,
  ``C' = |det S| S C S`` and ``I' = tr(C') E − C'`` (a mirror, ``det S < 0``, keeps a
  positive mass);
* placement: ``c_link = R c' + t`` and ``I_link = R I' Rᵀ`` (:meth:`MassProperties.moved`,
  which uses :func:`rotate_tensor`, the one place R·I·Rᵀ is written).
"""

from __future__ import annotations

import numpy as np

from ..errors import InputValueError
from .mass import MassProperties


def scaled(properties: MassProperties, scale) -> MassProperties:
    """The same uniform solid with its coordinates multiplied by ``scale`` (3 factors) about the origin.

    Parameters
    ----------
    properties : mass properties of the solid in its unscaled coordinates (SI)
    scale : (3,) non-zero factors along x, y, z

    Returns
    -------
    MassProperties
        Of the scaled solid at the same density: mass and volume times ``|s_x s_y s_z|``,
        centre of mass ``S c`` (m), inertia about it in the same axes (kg·m²).
    """
    factors = np.asarray(scale, dtype=np.float64).reshape(3)
    if not np.all(np.isfinite(factors)) or np.any(factors == 0.0):
        raise InputValueError("mesh scale", "three finite non-zero factors", factors.tolist())
    volume_factor = abs(float(np.prod(factors)))
    inertia = properties.inertia_about_com
    covariance = 0.5 * np.trace(inertia) * np.eye(3) - inertia
    covariance = volume_factor * (factors[:, None] * covariance * factors[None, :])
    new_inertia = np.trace(covariance) * np.eye(3) - covariance
    return MassProperties(
        properties.mass * volume_factor,
        properties.volume * volume_factor,
        factors * properties.center_of_mass,
        (new_inertia + new_inertia.T) / 2.0,
    )


def in_link_frame(properties: MassProperties, rotation, translation, scale=(1.0, 1.0, 1.0)) -> MassProperties:
    """A mesh's mass properties (file coordinates) in the link frame: scale, then ``x ↦ R x + t``.

    Parameters
    ----------
    properties : of the solid in the mesh file's coordinates (taken as metres before ``scale``)
    rotation : (3, 3) the mesh frame's rotation in the link frame (columns: mesh axes in link axes)
    translation : (3,) m, the mesh frame's origin in the link frame
    scale : (3,) factors applied to the file's coordinates

    Returns
    -------
    MassProperties
        Centre of mass ``R S c + t`` in the link frame (m), inertia ``R I' Rᵀ`` about it in link
        axes (kg·m², tensor convention).
    """
    return scaled(properties, scale).moved(rotation, translation)


def with_mass(properties: MassProperties, mass: float) -> MassProperties:
    """The same shape with its density chosen so the mass is ``mass`` (kg): inertia scales with it."""
    if not np.isfinite(mass) or mass <= 0:
        raise InputValueError("mass", "a finite mass > 0 kg", mass)
    ratio = float(mass) / properties.mass
    return MassProperties(float(mass), properties.volume, properties.center_of_mass, properties.inertia_about_com * ratio)
