"""Balance of a rigid part spinning about a shaft axis: unbalance, grades, loads, spin.

Pure math on mass properties (no files, no text formatting). Inputs and results
are SI (kg, m, s, rad) unless a name says otherwise (``_g_mm``, ``_deg``, grades
in mm/s as the trade writes them).

Frames and conventions
----------------------
* Input frame: the frame the mass properties are given in. The inertia tensor
  about the centre of mass uses the tensor convention
  ``I_ij = ∫ (r² δ_ij − x_i x_j) dm`` (off-diagonals are minus the products of
  inertia).
* Shaft axes ``(u, v, a)``: ``a`` is the unit shaft direction, ``u`` the
  *angle reference*, a unit vector perpendicular to the shaft, and
  ``v = a × u``, so ``(u, v, a)`` is right-handed. Unless given, ``u`` is the
  input coordinate axis with the smallest component along ``a`` (x before y
  before z on a tie), projected onto the plane perpendicular to ``a`` and
  normalized: a shaft along z measures angles from x towards y.
* Angles in the plane perpendicular to the shaft are measured from ``u``
  towards ``v`` (right-handed about ``a``: counter-clockwise seen with ``a``
  pointing at the viewer), in ``[0, 2π)``, at the orientation the part is
  modelled in. The rotor spins right-handed about ``a``: ``ω = Ω a``.
* Axial positions (bearings, correction planes, the centre of mass) are signed
  distances along ``a`` from the axis point, in metres.
* An unbalance is a mass times its radial offset (kg·m; the trade reads g·mm).
  The couple unbalance is ``C = ∫ x_a (x_u, x_v) dm`` about the centre of mass,
  that is the products of inertia ``P_ua, P_va`` in shaft axes (kg·m²; g·mm²):
  a pair of equal and opposite unbalances ``±U`` a distance ``d`` apart along
  the shaft carries ``|C| = |U| d``, pointing at the ``+a`` side's unbalance.
* Forces at speed are the rotating forces the rotor exerts *on* its bearings
  (the bearings push back with the opposite), turning with the shaft at ``Ω``.

Geometry-derived unbalance assumes a uniform density and perfect manufacture;
real rotors are balanced on a balancing machine against the machine's standards.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..errors import InputValueError
from .mass import MassProperties, rotate_tensor
from .principal import SYMMETRY_RTOL, principal_frame

#: Relative size under which a vector counts as numerically zero (its angle is then undefined).
ZERO_RTOL = 1e-12
#: Relative tolerance for "these principal moments coincide": the principal frame's.
EQUAL_MOMENT_RTOL = SYMMETRY_RTOL
#: A relative gap between two principal moments below this is flagged as near-equal: small
#: changes of the products of inertia (tolerances, added parts) then swing the principal axes
#: by large angles (the swing is about the product change divided by the gap). Our own choice.
NEAR_EQUAL_RTOL = 0.05
#: Bounds on each correction plane's share of the permissible residual unbalance
#: (from memory, after ISO 21940-11's allocation rule for rotors whose centre of mass
#: lies between the planes).
PLANE_SHARE_BOUNDS = (0.3, 0.7)

# 1 kg·m = 1e6 g·mm; 1 kg·m² = 1e9 g·mm² (exact, SI prefixes).
G_MM_PER_KG_M = 1e6
G_MM2_PER_KG_M2 = 1e9


# --------------------------------------------------------------------------- grades


@dataclass(frozen=True, slots=True, eq=False)
class BalanceGrade:
    """A balance quality grade ``G``: the permissible ``e_per · Ω`` in mm/s.

    Attributes
    ----------
    value : float, mm/s (``G 6.3`` has value 6.3)
    applications : str, typical parts of this grade (paraphrased, abridged)
    """

    value: float
    applications: str

    @property
    def label(self) -> str:
        """The grade as the trade writes it, e.g. ``"G 6.3"``."""
        return f"G {self.value:g}"


#: Where the grade table comes from. Values and applications are recalled from memory
#: and the applications are paraphrased and abridged in our own words; check the
#: standard itself before relying on a row.
GRADE_TABLE_SOURCE = (
    "ISO 21940-11:2016, Table 1 (formerly ISO 1940-1:2003); from memory, applications "
    "paraphrased and abridged"
)
GRADE_TABLE_FROM_MEMORY = True

#: The usual balance quality grades, finest first. Neighbouring grades differ by a
#: factor of about 2.5 (common practice).
BALANCE_GRADES: tuple[BalanceGrade, ...] = (
    BalanceGrade(0.4, "spindles, discs and armatures of precision grinding machines; gyroscopes"),
    BalanceGrade(1.0, "drives of grinding machines; small armatures with special demands; tape and disc drives"),
    BalanceGrade(2.5, "gas and steam turbines; turbo-compressors and turbo-generators; machine-tool drives; "
                      "armatures with special demands; disc drives and turbine-driven pumps"),
    BalanceGrade(6.3, "general machinery: fans, flywheels, pump impellers, centrifuge drums, rolls, "
                      "process-plant parts, gears, ordinary electric armatures"),
    BalanceGrade(16.0, "drive shafts with special demands; parts of crushers and farm machinery; "
                       "engine parts of cars and trucks"),
    BalanceGrade(40.0, "wheels and rims of cars; drive shafts; crank drives of resiliently mounted fast "
                       "four-stroke engines"),
    BalanceGrade(100.0, "complete engines of cars, trucks and locomotives; crank drives of fast engines "
                        "with six or more cylinders"),
    BalanceGrade(250.0, "crank drives of rigidly mounted fast four-cylinder diesel engines"),
    BalanceGrade(630.0, "crank drives of rigidly mounted large four-stroke engines; resiliently mounted "
                        "marine diesel engines"),
    BalanceGrade(1600.0, "crank drives of rigidly mounted large two-stroke engines"),
    BalanceGrade(4000.0, "crank drives of rigidly mounted slow marine diesel engines with an odd number "
                         "of cylinders"),
)  # fmt: skip


def find_grade(grade) -> BalanceGrade:
    """The table grade named by ``grade``: a number (``6.3``) or text (``"6.3"``, ``"G6.3"``, ``"G 6.3"``).

    Raises :class:`~meshprops.errors.InputValueError` for a grade not in :data:`BALANCE_GRADES`.
    """
    known = ", ".join(g.label.replace(" ", "") for g in BALANCE_GRADES)
    text = str(grade).strip()
    number_text = text[1:].strip() if text[:1] in ("G", "g") else text
    try:
        value = float(number_text)
    except ValueError:
        raise InputValueError("balance grade", f"one of {known}", grade) from None
    for entry in BALANCE_GRADES:
        if math.isclose(value, entry.value, rel_tol=1e-9):
            return entry
    raise InputValueError("balance grade", f"one of {known}", grade)


def permissible_unbalance(grade_mm_per_s: float, mass: float, angular_speed: float) -> float:
    """Permissible residual unbalance ``U_per = G m / Ω`` (ISO 21940-11), in kg·m.

    ``grade_mm_per_s`` in mm/s, ``mass`` in kg, ``angular_speed`` in rad/s. In the
    trade's units this is ``9549 G m / n`` g·mm with ``n`` in rpm.
    """
    return grade_mm_per_s * 1e-3 * mass / angular_speed


# --------------------------------------------------------------------------- shaft axes


@dataclass(frozen=True, slots=True, eq=False)
class ShaftAxes:
    """The shaft axis and the axes ``(u, v, a)`` that angles are measured in.

    Attributes
    ----------
    point : (3,) m, a point on the shaft axis, input frame
    direction : (3,) unit shaft direction ``a``, input frame
    reference : (3,) unit angle reference ``u`` (perpendicular to ``a``), input frame
    quadrature : (3,) unit ``v = a × u``, input frame (angle 90°)
    rotation : (3, 3) rows ``u, v, a``: maps input-frame components to shaft-axis components
    """

    point: np.ndarray
    direction: np.ndarray
    reference: np.ndarray
    quadrature: np.ndarray
    rotation: np.ndarray

    def axial_position(self, position) -> float:
        """Signed distance (m) of ``position`` (input frame, m) along the shaft from the axis point."""
        return float(self.direction @ (np.asarray(position, dtype=np.float64) - self.point))

    def radial_vector(self, components) -> np.ndarray:
        """The input-frame vector of a radial ``(u, v)`` pair."""
        components = np.asarray(components, dtype=np.float64)
        return components[0] * self.reference + components[1] * self.quadrature


def _shown(value):
    """An input as an error message shows it (arrays as plain lists)."""
    return value.tolist() if isinstance(value, np.ndarray) else value


def finite_vector(value, name: str) -> np.ndarray:
    """``value`` as a finite (3,) float64 array, or :class:`InputValueError` naming ``name``."""
    try:
        vector = np.asarray(value, dtype=np.float64).reshape(-1)
    except (TypeError, ValueError):
        raise InputValueError(name, "three finite numbers", _shown(value)) from None
    if vector.shape != (3,) or not np.all(np.isfinite(vector)):
        raise InputValueError(name, "three finite numbers", _shown(value))
    return vector


def unit_vector(value, name: str) -> np.ndarray:
    """``value`` normalized; a zero or non-finite vector raises :class:`InputValueError` naming ``name``."""
    vector = finite_vector(value, name)
    length = float(np.linalg.norm(vector))
    if length == 0.0:
        raise InputValueError(name, "a non-zero direction", _shown(value))
    return vector / length


def shaft_axes(point, direction, reference=None) -> ShaftAxes:
    """Shaft axes from a point on the axis (m), its direction (normalized here) and an optional angle reference.

    ``reference`` (input frame) is projected onto the plane perpendicular to the
    shaft; it must not be parallel to the shaft. See the module docstring for the
    default.
    """
    point = finite_vector(point, "axis point")
    axis = unit_vector(direction, "axis direction")
    if reference is None:
        # smallest |component| first; np.argmin keeps the first index on a tie (x before y before z)
        reference = np.eye(3)[int(np.argmin(np.abs(axis)))]
    else:
        reference = finite_vector(reference, "angle reference")
    projected = reference - (reference @ axis) * axis
    length = float(np.linalg.norm(projected))
    if length <= 1e-9 * max(float(np.linalg.norm(reference)), np.finfo(float).tiny):
        raise InputValueError("angle reference", "a direction not parallel to the shaft", _shown(reference))
    u = projected / length
    v = np.cross(axis, u)
    return ShaftAxes(point, axis, u, v, np.array([u, v, axis]))


# --------------------------------------------------------------------------- results


@dataclass(frozen=True, slots=True, eq=False)
class RotatingVector:
    """A vector perpendicular to the shaft that turns with it (an unbalance or a bearing force).

    Attributes
    ----------
    components : (2,) along ``u`` and ``v`` (shaft axes), in the quantity's unit
    vector : (3,) the same in the input frame, at the modelled orientation
    magnitude : float, the quantity's unit
    angle : float rad in ``[0, 2π)`` from ``u`` towards ``v``, or ``None`` when the
        magnitude is numerically zero (below :data:`ZERO_RTOL` of the problem's scale)
    """

    components: np.ndarray
    vector: np.ndarray
    magnitude: float
    angle: float | None

    @property
    def angle_deg(self) -> float | None:
        """:attr:`angle` in degrees, ``[0, 360)``; ``None`` when undefined."""
        return None if self.angle is None else math.degrees(self.angle)


def _wrapped(angle: float) -> float:
    """``angle`` (rad) in ``[0, 2π)``; ``%`` alone can round a tiny negative angle up to 2π."""
    wrapped = float(angle) % (2.0 * math.pi)
    return 0.0 if wrapped >= 2.0 * math.pi else wrapped


def _rotating(components, axes: ShaftAxes, scale: float) -> RotatingVector:
    components = np.asarray(components, dtype=np.float64)
    magnitude = float(np.hypot(components[0], components[1]))
    angle = None
    if magnitude > ZERO_RTOL * scale:
        angle = _wrapped(math.atan2(components[1], components[0]))
    return RotatingVector(components, axes.radial_vector(components), magnitude, angle)


@dataclass(frozen=True, slots=True, eq=False)
class StaticUnbalance:
    """The centre of mass off the shaft axis.

    Attributes
    ----------
    com_offset : (3,) m, input frame; from the nearest point of the axis to the centre of mass
    offset_distance : float, m, ``e = |com_offset|``
    com_axial_position : float, m, the centre of mass's position along the shaft
    unbalance : RotatingVector, kg·m, ``m e`` pointing at the centre of mass
    """

    com_offset: np.ndarray
    offset_distance: float
    com_axial_position: float
    unbalance: RotatingVector

    @property
    def g_mm(self) -> float:
        """Static unbalance in g·mm."""
        return self.unbalance.magnitude * G_MM_PER_KG_M


@dataclass(frozen=True, slots=True, eq=False)
class CoupleUnbalance:
    """The shaft not being a principal axis: products of inertia in shaft axes.

    Attributes
    ----------
    unbalance : RotatingVector, kg·m², ``(P_ua, P_va)`` about the centre of mass
        (angle: that of the unbalance on the ``+a`` side of the couple)
    inertia_in_shaft_axes : (3, 3) kg·m², about the centre of mass, rows/columns ``u, v, a``,
        tensor convention
    product_uv : float, kg·m², ``P_uv`` (does not unbalance the shaft; for completeness)
    """

    unbalance: RotatingVector
    inertia_in_shaft_axes: np.ndarray
    product_uv: float

    @property
    def g_mm2(self) -> float:
        """Couple unbalance in g·mm²."""
        return self.unbalance.magnitude * G_MM2_PER_KG_M2


@dataclass(frozen=True, slots=True, eq=False)
class PrincipalTilt:
    """The principal axis nearest to the shaft, and its tilt from it.

    Attributes
    ----------
    angle : float, rad, in ``[0, π/2]``
    axis : (3,) unit, input frame, with ``axis · a >= 0``. Where its moment is shared
        with another axis (axes not unique) it is the shaft's projection onto that
        plane of principal axes (or the shaft itself for a spherical tensor).
    moment : float, kg·m², its principal moment
    unique : bool, whether that principal axis is unique
    moment_about_shaft : float, kg·m², ``aᵀ I_cm a`` (through the centre of mass)
    """

    angle: float
    axis: np.ndarray
    moment: float
    unique: bool
    moment_about_shaft: float

    @property
    def angle_deg(self) -> float:
        return math.degrees(self.angle)


@dataclass(frozen=True, slots=True, eq=False)
class PlaneUnbalance:
    """The dynamic unbalance resolved into one correction plane.

    Attributes
    ----------
    position : float, m, along the shaft from the axis point
    unbalance : RotatingVector, kg·m
    correction_angle : float rad or ``None``; where to ADD mass (opposite the
        unbalance); removing ``correction_mass`` at the unbalance angle does the same
    correction_mass : float kg or ``None`` (no radius given); ``|U| / r``
    permissible : float kg·m or ``None``; this plane's share of ``U_per``
    share : float or ``None``; fraction of ``U_per`` allocated to this plane
    passes : bool or ``None``; ``|U| <= permissible``
    """

    position: float
    unbalance: RotatingVector
    correction_angle: float | None
    correction_mass: float | None
    permissible: float | None
    share: float | None
    passes: bool | None


@dataclass(frozen=True, slots=True, eq=False)
class GradeCheck:
    """The balance-grade check of the part as modelled.

    Attributes
    ----------
    grade : BalanceGrade, the required grade
    angular_speed : float, rad/s, the service speed
    permissible : float, kg·m, ``U_per = G m / Ω``
    permissible_offset : float, m, ``e_per = G / Ω`` (specific unbalance, g·mm/kg = µm)
    basis : ``"two_planes"`` (each correction plane against its share) or ``"static"``
        (no planes: the static unbalance against ``U_per``; the couple is not checked)
    passes : bool
    residual_grade : float, mm/s, the ``G`` value the part meets exactly
        (``|U_i| Ω / (share_i m)``, worst plane; or ``|U_s| Ω / m``)
    achieved_grade : BalanceGrade or ``None``; the finest table grade met (``None``
        when coarser than the coarsest grade)
    """

    grade: BalanceGrade
    angular_speed: float
    permissible: float
    permissible_offset: float
    basis: str
    passes: bool
    residual_grade: float
    achieved_grade: BalanceGrade | None

    @property
    def permissible_g_mm(self) -> float:
        return self.permissible * G_MM_PER_KG_M


@dataclass(frozen=True, slots=True, eq=False)
class BearingLoad:
    """Rotating force the rotor exerts on one bearing at speed (N), turning with the shaft.

    Attributes
    ----------
    position : float, m, along the shaft from the axis point
    static : RotatingVector, N, the part due to the static unbalance
    couple : RotatingVector, N, the part due to the couple unbalance
    total : RotatingVector, N, static + couple
    """

    position: float
    static: RotatingVector
    couple: RotatingVector
    total: RotatingVector


@dataclass(frozen=True, slots=True, eq=False)
class SpinAtSpeed:
    """The rotor turning at ``Ω`` about the shaft (input frame, modelled orientation).

    Attributes
    ----------
    angular_speed : float, rad/s
    angular_velocity : (3,) rad/s, ``Ω a``
    angular_momentum_about_com : (3,) kg·m²/s, ``I_cm ω``
    momentum_angle_to_shaft : float rad or ``None`` (``L`` zero); zero exactly when the
        shaft is a principal axis
    inertia_about_shaft : float, kg·m², about the shaft axis itself (``aᵀ I_cm a + m e²``)
    kinetic_energy : float, J, ``½ Ω² I_shaft`` (spin about the centre of mass plus the
        centre of mass's circling)
    rotational_kinetic_energy : float, J, ``½ ωᵀ I_cm ω``
    unbalance_force : (3,) N, ``m Ω² e``: the rotating force on the bearings, input frame
    unbalance_moment : (3,) N·m, ``ω × L``: the moment the bearings must supply about
        the centre of mass to turn ``L`` with the shaft; ``|…| = Ω² |C|``
    """

    angular_speed: float
    angular_velocity: np.ndarray
    angular_momentum_about_com: np.ndarray
    momentum_angle_to_shaft: float | None
    inertia_about_shaft: float
    kinetic_energy: float
    rotational_kinetic_energy: float
    unbalance_force: np.ndarray
    unbalance_moment: np.ndarray


@dataclass(frozen=True, slots=True, eq=False)
class GyroscopicMoment:
    """Moment to turn the spinning rotor's axis at a precession rate about a second axis.

    ``M = ω_p b × L_spin`` with ``L_spin = I_cm Ω a`` (common practice). It is exact for
    a rotor symmetric about the shaft in steady precession about an axis ``b``
    perpendicular to it; for other rotors it is the moment at the modelled orientation
    (it then varies twice a revolution).

    Attributes
    ----------
    axis : (3,) unit precession axis ``b``, input frame
    rate : float, rad/s, ``ω_p``
    moment : (3,) N·m, input frame, applied to the rotor (by its mounts)
    magnitude : float, N·m
    """

    axis: np.ndarray
    rate: float
    moment: np.ndarray
    magnitude: float


@dataclass(frozen=True, slots=True, eq=False)
class AxisSpin:
    """A free body (no bearings) set spinning at ``Ω`` about one principal axis.

    Attributes
    ----------
    moment : float, kg·m²
    axis : (3,) unit, input frame
    stability : ``"stable"`` (largest or smallest moment), ``"unstable"`` (intermediate)
        or ``"marginal"`` (its moment equals another: the spin axis drifts in the plane of
        the equal moments, or anywhere for three equal moments)
    rate : float, rad/s. Stable: frequency of a small wobble seen in the body,
        ``Ω √((I−I_i)(I−I_j)/(I_i I_j))``; unstable: the growth rate of a small tumble
        (e-folding), ``Ω √((I−I_i)(I_j−I)/(I_i I_j))``; marginal: 0. From Euler's
        equations linearized about the spin (common practice).
    """

    moment: float
    axis: np.ndarray
    stability: str
    rate: float


@dataclass(frozen=True, slots=True, eq=False)
class FreeSpin:
    """Free-spin stability about the principal axes (the rigid-body rule).

    Attributes
    ----------
    axes : tuple of three AxisSpin, moments ascending
    relative_gaps : (2,) ``(I2 − I1)/I3`` and ``(I3 − I2)/I3``
    near_equal : tuple of two bool, gap below :data:`NEAR_EQUAL_RTOL`: the neighbouring
        spins are nominally stable or unstable but sensitive to small changes
    Note: a body that dissipates energy (flexing parts, liquid) spins stably only about
    its largest moment (the major-axis rule, common practice).
    """

    axes: tuple[AxisSpin, AxisSpin, AxisSpin]
    relative_gaps: np.ndarray
    near_equal: tuple[bool, bool]


@dataclass(frozen=True, slots=True, eq=False)
class Flywheel:
    """The rotor as an energy store at speed.

    Attributes
    ----------
    inertia_about_shaft : float, kg·m²
    stored_energy : float, J, ``½ I_shaft Ω²``
    angular_momentum : float, kg·m²/s, ``I_shaft Ω`` (about the shaft axis)
    energy_per_mass : float, J/kg
    """

    inertia_about_shaft: float
    stored_energy: float
    angular_momentum: float
    energy_per_mass: float


@dataclass(frozen=True, slots=True, eq=False)
class BalanceResult:
    """Everything :func:`balance` finds (see the module docstring for the conventions).

    Attributes
    ----------
    mass : float, kg
    center_of_mass : (3,) m, input frame
    inertia_about_com : (3, 3) kg·m², input axes, tensor convention
    axes : ShaftAxes
    static : StaticUnbalance
    couple : CoupleUnbalance
    tilt : PrincipalTilt
    planes : tuple of two PlaneUnbalance, or ``None`` (no correction planes given)
    correction_radius : float m or ``None``
    grade : GradeCheck
    bearings : tuple of two BearingLoad, or ``None`` (no bearing positions given)
    spin : SpinAtSpeed
    gyroscopic : GyroscopicMoment or ``None`` (no precession given)
    free_spin : FreeSpin
    flywheel : Flywheel
    """

    mass: float
    center_of_mass: np.ndarray
    inertia_about_com: np.ndarray
    axes: ShaftAxes
    static: StaticUnbalance
    couple: CoupleUnbalance
    tilt: PrincipalTilt
    planes: tuple[PlaneUnbalance, PlaneUnbalance] | None
    correction_radius: float | None
    grade: GradeCheck
    bearings: tuple[BearingLoad, BearingLoad] | None
    spin: SpinAtSpeed
    gyroscopic: GyroscopicMoment | None
    free_spin: FreeSpin
    flywheel: Flywheel


# --------------------------------------------------------------------------- the pieces


def split_into_planes(static_unbalance, moment_about_point, positions) -> tuple[np.ndarray, np.ndarray]:
    """Two radial vectors at axial ``positions`` (z1, z2) with the given sum and first axial moment.

    Solves ``U1 + U2 = S`` and ``z1 U1 + z2 U2 = M`` (``S`` and ``M`` as ``(2,)``
    components in shaft axes, ``M`` about the axis point). The same split serves
    unbalances in correction planes (kg·m, kg·m²) and forces at bearings (N, N·m).
    Returns a ``(2, 2)`` array, one row per position.
    """
    first, second = (float(z) for z in positions)
    span = second - first
    static_unbalance = np.asarray(static_unbalance, dtype=np.float64)
    moment_about_point = np.asarray(moment_about_point, dtype=np.float64)
    return np.array(
        [
            (second * static_unbalance - moment_about_point) / span,
            (moment_about_point - first * static_unbalance) / span,
        ]
    )


def principal_tilt(inertia_about_com, direction) -> PrincipalTilt:
    """The principal axis of ``inertia_about_com`` (kg·m², tensor convention) nearest to the unit ``direction``."""
    tensor = np.asarray(inertia_about_com, dtype=np.float64)
    tensor = (tensor + tensor.T) / 2.0
    direction = np.asarray(direction, dtype=np.float64)
    frame = principal_frame(tensor)
    moments, vectors = frame.moments, frame.axes.T  # columns: principal axes
    scale = max(float(np.abs(moments).max()), np.finfo(float).tiny)
    groups: list[list[int]] = []
    for index in range(3):  # ascending: a moment joins the group of its equal predecessor
        if groups and moments[index] - moments[groups[-1][-1]] <= EQUAL_MOMENT_RTOL * scale:
            groups[-1].append(index)
        else:
            groups.append([index])
    best = None
    for group in groups:
        basis = vectors[:, group]
        along = basis.T @ direction
        perpendicular = direction - basis @ along
        angle = float(math.atan2(np.linalg.norm(perpendicular), np.linalg.norm(along)))
        if best is None or angle < best[0]:
            projected = basis @ along
            length = float(np.linalg.norm(projected))
            axis = projected / length if length > 0 else basis[:, 0]
            best = (angle, axis, float(np.mean(moments[group])), len(group) == 1)
    angle, axis, moment, unique = best
    return PrincipalTilt(angle, axis, moment, unique, float(direction @ tensor @ direction))


def free_spin(inertia_about_com, angular_speed: float) -> FreeSpin:
    """Stability of a free spin at ``angular_speed`` (rad/s) about each principal axis of ``inertia_about_com``."""
    frame = principal_frame(inertia_about_com)
    moments, vectors = frame.moments, frame.axes.T  # columns: principal axes, the measure's sign rule
    largest = max(float(moments[2]), np.finfo(float).tiny)
    tolerance = EQUAL_MOMENT_RTOL * largest
    axes = []
    for index in range(3):
        moment = float(moments[index])
        others = [float(moments[k]) for k in range(3) if k != index]
        differences = [moment - other for other in others]
        if any(abs(d) <= tolerance for d in differences):
            stability, rate = "marginal", 0.0
        else:
            squared = angular_speed**2 * differences[0] * differences[1] / (others[0] * others[1])
            stability = "stable" if squared > 0 else "unstable"
            rate = float(math.sqrt(abs(squared)))
        axes.append(AxisSpin(moment, vectors[:, index].copy(), stability, rate))
    gaps = np.array([moments[1] - moments[0], moments[2] - moments[1]]) / largest
    return FreeSpin(tuple(axes), gaps, (bool(gaps[0] < NEAR_EQUAL_RTOL), bool(gaps[1] < NEAR_EQUAL_RTOL)))


def gyroscopic_moment(inertia_about_com, direction, angular_speed: float, precession_axis, precession_rate: float):
    """Gyroscopic moment (N·m) for spin ``angular_speed`` about unit ``direction`` precessing at
    ``precession_rate`` (rad/s) about ``precession_axis`` (normalized here). See :class:`GyroscopicMoment`."""
    axis = unit_vector(precession_axis, "precession axis")
    rate = float(precession_rate)
    if not math.isfinite(rate):
        raise InputValueError("precession rate", "a finite rate in rad/s", precession_rate)
    spin_momentum = np.asarray(inertia_about_com, dtype=np.float64) @ (angular_speed * np.asarray(direction, float))
    moment = rate * np.cross(axis, spin_momentum)
    return GyroscopicMoment(axis, rate, moment, float(np.linalg.norm(moment)))


def axial_pair(values, name: str) -> tuple[float, float] | None:
    """Two different finite axial positions (any length unit); ``None`` passes through."""
    if values is None:
        return None
    try:
        pair = tuple(float(v) for v in values)
    except (TypeError, ValueError):
        raise InputValueError(name, "two positions along the shaft", values) from None
    if len(pair) != 2 or not all(math.isfinite(v) for v in pair):
        raise InputValueError(name, "two finite positions along the shaft", values)
    if pair[0] == pair[1]:
        raise InputValueError(name, "two different positions along the shaft", values)
    return pair


def positive_number(value, name: str, unit: str) -> float:
    """``value`` as a finite float > 0, or :class:`InputValueError` naming ``name`` and ``unit``."""
    try:
        number = float(value)
    except (TypeError, ValueError):
        raise InputValueError(name, f"a number in {unit}", value) from None
    if not math.isfinite(number) or number <= 0.0:
        raise InputValueError(name, f"a finite value > 0 {unit}", value)
    return number


def _plane_shares(com_axial_position: float, positions: tuple[float, float]) -> tuple[float, float]:
    """Lever-rule shares of ``U_per`` (nearer plane takes more), bounded by :data:`PLANE_SHARE_BOUNDS`."""
    first, second = positions
    share_first = (second - com_axial_position) / (second - first)
    low, high = PLANE_SHARE_BOUNDS
    share_first = min(max(share_first, low), high)
    return share_first, 1.0 - share_first


def _achieved(residual_grade: float) -> BalanceGrade | None:
    for entry in BALANCE_GRADES:
        if residual_grade <= entry.value * (1.0 + 1e-12):
            return entry
    return None


# --------------------------------------------------------------------------- entry point


def balance(
    mass: float,
    center_of_mass,
    inertia_about_com,
    *,
    axis_point,
    axis_direction,
    angular_speed: float,
    grade,
    angle_reference=None,
    correction_planes=None,
    correction_radius: float | None = None,
    bearing_positions=None,
    precession_axis=None,
    precession_rate: float | None = None,
) -> BalanceResult:
    """Unbalance, balance-grade check, bearing loads and spin of a part turning about a shaft.

    Parameters
    ----------
    mass : float, kg
    center_of_mass : (3,) m, input frame
    inertia_about_com : (3, 3) kg·m², about the centre of mass, input axes, tensor convention
    axis_point : (3,) m, a point of the shaft axis, input frame
    axis_direction : (3,) input frame, any length > 0 (normalized here)
    angular_speed : float, rad/s, > 0 (the service speed; ``ω = Ω a``)
    grade : a table grade (``6.3``, ``"G6.3"``) or a :class:`BalanceGrade`
    angle_reference : (3,) input frame, optional; the ``u`` direction angles start from
    correction_planes : two axial positions (m), optional; resolves the dynamic unbalance
        into them and checks each against its share of ``U_per``
    correction_radius : float m, optional; gives each plane's correction mass
    bearing_positions : two axial positions (m), optional; gives the bearing reactions
    precession_axis, precession_rate : (3,) and rad/s, optional, together; gives the
        gyroscopic moment
    """
    mass = positive_number(mass, "mass", "kg")
    center = finite_vector(center_of_mass, "centre of mass")
    try:
        inertia = np.asarray(inertia_about_com, dtype=np.float64)
    except (TypeError, ValueError):
        raise InputValueError("inertia about the centre of mass", "a 3x3 tensor in kg*m^2", inertia_about_com) from None
    if inertia.shape != (3, 3) or not np.all(np.isfinite(inertia)):
        raise InputValueError("inertia about the centre of mass", "a finite 3x3 tensor in kg*m^2", inertia_about_com)
    inertia = (inertia + inertia.T) / 2.0
    speed = positive_number(angular_speed, "angular speed", "rad/s")
    required = grade if isinstance(grade, BalanceGrade) else find_grade(grade)
    axes = shaft_axes(axis_point, axis_direction, angle_reference)
    planes_at = axial_pair(correction_planes, "correction planes")
    bearings_at = axial_pair(bearing_positions, "bearing positions")
    radius = None if correction_radius is None else positive_number(correction_radius, "correction radius", "m")
    if (precession_axis is None) != (precession_rate is None):
        raise InputValueError("precession", "both an axis and a rate, or neither", (precession_axis, precession_rate))

    # Scales for "numerically zero": a length from the inertia (radius of gyration) and the mass.
    length_scale = math.sqrt(max(float(np.trace(inertia)), 0.0) / mass) or 1.0
    unbalance_scale = mass * length_scale
    couple_scale = mass * length_scale**2

    shaft_center = axes.rotation @ (center - axes.point)
    com_axial = float(shaft_center[2])
    static_components = mass * shaft_center[:2]
    static = StaticUnbalance(
        com_offset=axes.radial_vector(shaft_center[:2]),
        offset_distance=float(np.hypot(shaft_center[0], shaft_center[1])),
        com_axial_position=com_axial,
        unbalance=_rotating(static_components, axes, unbalance_scale),
    )

    in_shaft_axes = rotate_tensor(inertia, axes.rotation)
    couple_components = -np.array([in_shaft_axes[0, 2], in_shaft_axes[1, 2]])  # P_ua, P_va
    couple = CoupleUnbalance(
        unbalance=_rotating(couple_components, axes, couple_scale),
        inertia_in_shaft_axes=in_shaft_axes,
        product_uv=float(-in_shaft_axes[0, 1]),
    )
    moment_about_point = couple_components + com_axial * static_components  # ∫ z (x_u, x_v) dm about the axis point

    permissible = permissible_unbalance(required.value, mass, speed)
    planes = None
    if planes_at is not None:
        split = split_into_planes(static_components, moment_about_point, planes_at)
        shares = _plane_shares(com_axial, planes_at)
        planes_list = []
        for position, components, share in zip(planes_at, split, shares):
            vector = _rotating(components, axes, unbalance_scale)
            allowed = share * permissible
            planes_list.append(
                PlaneUnbalance(
                    position=position,
                    unbalance=vector,
                    correction_angle=None if vector.angle is None else _wrapped(vector.angle + math.pi),
                    correction_mass=None if radius is None else vector.magnitude / radius,
                    permissible=allowed,
                    share=share,
                    passes=bool(vector.magnitude <= allowed),
                )
            )
        planes = tuple(planes_list)
        residual = max(p.unbalance.magnitude * speed / (p.share * mass) for p in planes) * 1e3
        passes = all(p.passes for p in planes)
        basis = "two_planes"
    else:
        residual = static.unbalance.magnitude * speed / mass * 1e3
        passes = bool(static.unbalance.magnitude <= permissible)
        basis = "static"
    grade_check = GradeCheck(
        grade=required,
        angular_speed=speed,
        permissible=permissible,
        permissible_offset=permissible / mass,
        basis=basis,
        passes=passes,
        residual_grade=float(residual),
        achieved_grade=_achieved(float(residual)),
    )

    bearings = None
    if bearings_at is not None:
        squared = speed**2
        static_split = split_into_planes(squared * static_components, squared * com_axial * static_components, bearings_at)
        couple_split = split_into_planes(np.zeros(2), squared * couple_components, bearings_at)
        force_scale = squared * unbalance_scale
        bearings = tuple(
            BearingLoad(
                position=position,
                static=_rotating(static_part, axes, force_scale),
                couple=_rotating(couple_part, axes, force_scale),
                total=_rotating(static_part + couple_part, axes, force_scale),
            )
            for position, static_part, couple_part in zip(bearings_at, static_split, couple_split)
        )

    omega = speed * axes.direction
    momentum = inertia @ omega
    inertia_about_shaft = float(axes.direction @ inertia @ axes.direction) + mass * static.offset_distance**2
    momentum_length = float(np.linalg.norm(momentum))
    momentum_angle = None
    if momentum_length > 0.0:
        momentum_angle = float(math.atan2(np.linalg.norm(np.cross(momentum, axes.direction)), momentum @ axes.direction))
    spin = SpinAtSpeed(
        angular_speed=speed,
        angular_velocity=omega,
        angular_momentum_about_com=momentum,
        momentum_angle_to_shaft=momentum_angle,
        inertia_about_shaft=inertia_about_shaft,
        kinetic_energy=0.5 * speed**2 * inertia_about_shaft,
        rotational_kinetic_energy=float(0.5 * omega @ momentum),
        unbalance_force=speed**2 * mass * static.com_offset,
        unbalance_moment=np.cross(omega, momentum),
    )

    gyroscopic = None
    if precession_axis is not None:
        gyroscopic = gyroscopic_moment(inertia, axes.direction, speed, precession_axis, precession_rate)

    stored = 0.5 * speed**2 * inertia_about_shaft
    return BalanceResult(
        mass=mass,
        center_of_mass=center,
        inertia_about_com=inertia,
        axes=axes,
        static=static,
        couple=couple,
        tilt=principal_tilt(inertia, axes.direction),
        planes=planes,
        correction_radius=radius,
        grade=grade_check,
        bearings=bearings,
        spin=spin,
        gyroscopic=gyroscopic,
        free_spin=free_spin(inertia, speed),
        flywheel=Flywheel(inertia_about_shaft, stored, inertia_about_shaft * speed, stored / mass),
    )


def balance_of(properties: MassProperties, **options) -> BalanceResult:
    """:func:`balance` of measured mass properties (SI, input frame); ``options`` as for :func:`balance`."""
    return balance(properties.mass, properties.center_of_mass, properties.inertia_about_com, **options)
