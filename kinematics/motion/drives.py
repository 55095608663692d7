"""Wheel kinematics of each drive type: body twist to wheel rates and steer angles, and back.

Every drive answers the same small set of questions (:class:`DriveModel`): its wheel names,
which wheels steer, whether it moves sideways (``holonomic``) or turns on the spot
(``can_pivot``), its least turn radius, the wheel rates and steer angles that make a body twist
(``inverse``) and the twist that wheel commands make (``forward``, least squares where there
are more wheel equations than twist components).

A body twist is ``(vx, vy, omega)`` of the chassis reference point in the body frame (x
forward, y left; omega counter-clockwise). Each wheel's contact point at body position
``(x_i, y_i)`` moves with the rigid-body velocity ``(vx - omega * y_i, vy + omega * x_i)``
(``v + omega x r_i``). The models are the standard rolling-without-slipping ones:

- differential (also tracked / skid-steer): two fixed wheels at ``y = +-b/2`` with
  ``b = effective_track_factor * track_m``; ``v = r (wr + wl) / 2``,
  ``omega = r (wr - wl) / b`` (Siegwart, Nourbakhsh & Scaramuzza, *Introduction to Autonomous
  Mobile Robots*, 2nd ed., ch. 3). The effective track factor is the usual first-order model
  of skid-steer slip: the chassis yaws as if its wheels were ``b`` apart.
- bicycle: front wheel steered and driven, reference point the rear axle midpoint; a free,
  unsteered rear wheel stops sideways slip. ``tan(steer) = omega * L / vx``,
  ``R = L / tan(steer)`` (Rajamani, *Vehicle Dynamics and Control*, 2nd ed., sec. 2.2). The
  contract names two bicycle wheels, ``drive`` and ``steer``; both describe that one front
  wheel (its traction and its steering) and carry the same rate and angle, so a reader of
  either gets the front wheel's motion. Its rate is ``v_front / r`` with
  ``v_front = vx / cos(steer)``.
- ackermann: car-like, rear wheels fixed at ``(0, +-T/2)``, front wheels steered at
  ``(L, +-T/2)``, each pointed at the common turn centre on the rear axle line, which gives
  the Ackermann condition ``cot(outer) - cot(inner) = T / L`` (Gillespie, *Fundamentals of
  Vehicle Dynamics*, ch. 6). ``max_steer_deg`` is the inner (largest) wheel angle.
- mecanum: four wheels at ``(+-L/2, +-T/2)`` with 45 degree rollers; wheel rate
  ``u_i = (vx - omega y_i + tan(gamma_i) (vy + omega x_i)) / r`` with ``gamma = -45`` deg for
  front-left and rear-right, ``+45`` deg for front-right and rear-left (Lynch & Park,
  *Modern Robotics*, sec. 13.2, the ``H(0)`` matrix).
- swerve: four independently steered modules at ``(+-L/2, +-T/2)``; each module points along
  its contact-point velocity and rolls at ``|v_i| / r``.

Steer angles are kept in ``(-90, 90]`` degrees and the rate carries the sign (reverse gives
negative rates), so ``inverse(s * twist)`` has the same angles and ``s`` times the rates for
any scalar ``s``. Where a steered wheel's angle is undefined (its contact point does not
move) the angle is held at the value given in ``hold_angles`` (default 0), never NaN.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike, NDArray

from kinematics.errors import ValidationError
from kinematics.motion.arrays import unique_sorted

_HALF_PI = 0.5 * math.pi
# A contact point slower than this (m/s) has no defined rolling direction.
_STILL_MPS = 1e-12

WHEELS4 = ("front_left", "front_right", "rear_left", "rear_right")


@dataclass(frozen=True)
class WheelCommands:
    """Wheel rates (rad/s, signed) for every wheel and steer angles (rad) for steered ones.

    Every value is a numpy array; all share one shape (that of the broadcast twist).
    """

    rate_radps: dict[str, NDArray[np.float64]]
    angle_rad: dict[str, NDArray[np.float64]] = field(default_factory=dict)

    def rates(self, names: tuple[str, ...]) -> NDArray[np.float64]:
        """Rates stacked on a last axis in the order of ``names``, shape ``(..., len(names))``."""
        return np.stack([np.asarray(self.rate_radps[n], dtype=float) for n in names], axis=-1)


def _steered_wheel(vx_i: NDArray, vy_i: NDArray, r: float,
                   hold: ArrayLike) -> tuple[NDArray, NDArray]:
    """Signed rate and angle in (-pi/2, pi/2] of a wheel whose contact moves at (vx_i, vy_i)."""
    speed = np.hypot(vx_i, vy_i)
    ang = np.arctan2(vy_i, vx_i)
    back = ang > _HALF_PI
    ahead = ang <= -_HALF_PI
    sign = np.where(back | ahead, -1.0, 1.0)
    ang = np.where(back, ang - math.pi, np.where(ahead, ang + math.pi, ang))
    still = speed <= _STILL_MPS
    ang = np.where(still, np.broadcast_to(np.asarray(hold, dtype=float), ang.shape), ang)
    return sign * speed / r, ang


def _rolling_rows(x: float, y: float, a: NDArray) -> tuple[NDArray, NDArray]:
    """Rows of the rolling and no-side-slip equations of a wheel at (x, y) pointed at ``a``.

    ``rolling . twist = r * rate`` and ``lateral . twist = 0``, twist = (vx, vy, omega).
    """
    c, s = np.cos(a), np.sin(a)
    rolling = np.stack([c, s, x * s - y * c], axis=-1)
    lateral = np.stack([-s, c, x * c + y * s], axis=-1)
    return rolling, lateral


def _least_squares(rows: list[NDArray], rhs: list[NDArray]) -> tuple[NDArray, NDArray, NDArray]:
    """Solve stacked equations ``A @ twist = b`` in the least-squares sense, batched."""
    A = np.stack(np.broadcast_arrays(*rows), axis=-2)  # (..., m, 3)
    shape = A.shape[:-2]
    b = np.stack([np.broadcast_to(np.asarray(v, dtype=float), shape) for v in rhs], axis=-1)
    twist = np.einsum("...ij,...j->...i", np.linalg.pinv(A), b)
    return twist[..., 0], twist[..., 1], twist[..., 2]


class DriveModel:
    """Kinematics of one drive type; subclasses set the attributes and the two mappings.

    Attributes
    ----------
    name : str
        The contract's drive name.
    wheel_names : tuple of str
        Wheel names exactly as the contract spells them.
    steered_wheels : tuple of str
        The wheels that also have a steer angle.
    holonomic : bool
        True if the drive can move sideways (``vy != 0``).
    can_pivot : bool
        True if the drive can turn on the spot (a differential chassis with a stated
        ``min_turn_radius_m > 0`` cannot).
    min_turn_radius_m : float
        Least turn radius of the reference point (0 for a drive that pivots freely).
    wheel_radius_m : float
    """

    name: str = ""
    wheel_names: tuple[str, ...] = ()
    steered_wheels: tuple[str, ...] = ()
    holonomic: bool = False
    can_pivot: bool = False
    min_turn_radius_m: float = 0.0
    wheel_radius_m: float = 0.1

    # -- the two mappings -------------------------------------------------------------------
    def inverse(self, vx: ArrayLike, vy: ArrayLike, omega: ArrayLike,
                hold_angles: Mapping[str, ArrayLike] | None = None) -> WheelCommands:
        """Wheel rates (rad/s) and steer angles (rad) that make the body twist.

        Parameters
        ----------
        vx, vy : array_like
            Body-frame velocity of the reference point, m/s. Non-holonomic drives cannot make
            ``vy`` and ignore it.
        omega : array_like
            Yaw rate, rad/s, counter-clockwise positive.
        hold_angles : mapping, optional
            Steer angle (rad) to keep for a steered wheel where its contact point is still.

        Returns
        -------
        WheelCommands
        """
        raise NotImplementedError

    def forward(self, commands: WheelCommands) -> tuple[NDArray, NDArray, NDArray]:
        """Body twist ``(vx, vy, omega)`` made by the wheel commands (least squares)."""
        raise NotImplementedError

    # -- limits -----------------------------------------------------------------------------
    def max_rate_per_unit(self, vx: ArrayLike, vy: ArrayLike, omega: ArrayLike) -> NDArray:
        """The largest ``|wheel rate|`` (rad/s) over all wheels for the given twist.

        The inverse is homogeneous of degree one, so for a twist scaled by ``s`` it is ``|s|``
        times this; used to turn a wheel-rate limit into a speed or yaw-rate limit.
        """
        cmd = self.inverse(vx, vy, omega)
        return np.max(np.abs(cmd.rates(self.wheel_names)), axis=-1)

    def max_speed_on_curvature(self, kappa: ArrayLike, max_wheel_rate_radps: float,
                               direction: int = 1) -> NDArray[np.float64]:
        """Largest reference-point speed (m/s) on a path of signed curvature ``kappa`` (1/m).

        Every wheel's own rate must stay within ``max_wheel_rate_radps``; on an arc the outer
        wheel reaches the limit first. ``kappa`` is d(heading)/d(signed distance) as in
        :attr:`kinematics.motion.segments.Segment.curvature`; the limit is the same both ways.
        """
        kappa = np.asarray(kappa, dtype=float)
        d = float(direction)
        per = self.max_rate_per_unit(d * np.ones_like(kappa), 0.0, kappa * d)
        return max_wheel_rate_radps / per

    def max_pivot_yaw_rate(self, max_wheel_rate_radps: float) -> float:
        """Largest yaw rate (rad/s) of a turn on the spot within the wheel-rate limit."""
        return float(max_wheel_rate_radps / self.max_rate_per_unit(0.0, 0.0, 1.0))

    def pivot_lever_m(self) -> float:
        """Rim speed of the fastest wheel per unit yaw rate (m) in a turn on the spot.

        Dividing the wheel's tangential acceleration limit by this gives the angular
        acceleration limit of a pivot (``max_accel / (b/2)`` for a differential drive).
        """
        return float(self.wheel_radius_m * self.max_rate_per_unit(0.0, 0.0, 1.0))

    def critical_course_angles(self) -> NDArray[np.float64]:
        """Body-frame travel directions (rad, modulo pi) where some wheel rate is extremal.

        For a holonomic move with unit speed along body direction ``phi`` and a fixed yaw rate
        per metre, every wheel rate (or its square) is ``A cos(phi) + B sin(phi) + C``, whose
        extremes over ``phi`` lie at these angles or at the ends of the swept range.
        """
        return np.zeros(0)


class DifferentialDrive(DriveModel):
    """Two fixed wheels on one axle; also tracked and skid-steer with an effective track."""

    name = "differential"
    wheel_names = ("left", "right")
    holonomic = False
    can_pivot = True

    def __init__(self, wheel_radius_m: float, track_m: float, effective_track_factor: float = 1.0,
                 min_turn_radius_m: float = 0.0) -> None:
        self.wheel_radius_m = float(wheel_radius_m)
        self.track_m = float(track_m)
        self.effective_track_m = float(effective_track_factor) * self.track_m
        self.min_turn_radius_m = float(min_turn_radius_m)
        # A stated least radius (a tracked chassis that must not scrub, a tall load) rules
        # out the radius-0 turn too.
        self.can_pivot = self.min_turn_radius_m == 0.0

    def inverse(self, vx, vy, omega, hold_angles=None) -> WheelCommands:
        vx, omega = np.broadcast_arrays(np.asarray(vx, float), np.asarray(omega, float))
        half = 0.5 * self.effective_track_m
        r = self.wheel_radius_m
        return WheelCommands({"left": (vx - omega * half) / r, "right": (vx + omega * half) / r})

    def forward(self, commands: WheelCommands):
        wl = np.asarray(commands.rate_radps["left"], float)
        wr = np.asarray(commands.rate_radps["right"], float)
        r = self.wheel_radius_m
        # Source formula: Siegwart et al., ch. 3 (see module docstring).
        vx = r * (wr + wl) / 2.0
        omega = r * (wr - wl) / self.effective_track_m
        return vx, np.zeros_like(vx), omega


class BicycleDrive(DriveModel):
    """Kinematic bicycle: a driven rear wheel at the reference point, a steered front wheel.

    ``drive`` is the rear wheel on the reference point (rate v / r, never steered); ``steer``
    is the front wheel ``wheelbase_m`` ahead, with its steer angle and its own rolling rate
    v / (r cos(delta)), because the front axle runs on a larger circle (Rajamani, *Vehicle
    Dynamics and Control*, 2nd ed., sec. 2.2). A tricycle tug whose front wheel both steers
    and drives reads the ``steer`` entry for its traction motor.
    """

    name = "bicycle"
    wheel_names = ("drive", "steer")
    steered_wheels = ("steer",)
    holonomic = False
    can_pivot = False

    def __init__(self, wheel_radius_m: float, wheelbase_m: float, max_steer_deg: float,
                 min_turn_radius_m: float = 0.0) -> None:
        self.wheel_radius_m = float(wheel_radius_m)
        self.wheelbase_m = float(wheelbase_m)
        self.max_steer_rad = math.radians(max_steer_deg)
        self.min_turn_radius_m = max(self.wheelbase_m / math.tan(self.max_steer_rad),
                                     float(min_turn_radius_m))

    def inverse(self, vx, vy, omega, hold_angles=None) -> WheelCommands:
        vx, omega = np.broadcast_arrays(np.asarray(vx, float), np.asarray(omega, float))
        hold = (hold_angles or {}).get("steer", 0.0)
        # Front contact point at (L, 0): velocity (vx, omega * L).
        rate, ang = _steered_wheel(vx, omega * self.wheelbase_m, self.wheel_radius_m, hold)
        rear = vx / self.wheel_radius_m
        return WheelCommands({"drive": np.array(rear, dtype=float), "steer": rate},
                             {"steer": ang})

    def forward(self, commands: WheelCommands):
        r = self.wheel_radius_m
        a = np.asarray(commands.angle_rad["steer"], float)
        rear = np.asarray(commands.rate_radps["drive"], float)
        roll_f, lat_f = _rolling_rows(self.wheelbase_m, 0.0, a)
        roll_r, lat_r = _rolling_rows(0.0, 0.0, np.zeros_like(a))
        rows = [roll_f, lat_f, roll_r, lat_r]
        rhs = [r * np.asarray(commands.rate_radps["steer"], float), np.zeros_like(a),
               r * rear, np.zeros_like(a)]
        return _least_squares(rows, rhs)


class AckermannDrive(DriveModel):
    """Car-like: fixed rear wheels, front wheels steered by the Ackermann condition."""

    name = "ackermann"
    wheel_names = WHEELS4
    steered_wheels = ("front_left", "front_right")
    holonomic = False
    can_pivot = False

    def __init__(self, wheel_radius_m: float, wheelbase_m: float, track_m: float,
                 max_steer_deg: float, min_turn_radius_m: float = 0.0) -> None:
        self.wheel_radius_m = float(wheel_radius_m)
        self.wheelbase_m = float(wheelbase_m)
        self.track_m = float(track_m)
        self.max_steer_rad = math.radians(max_steer_deg)
        # The inner front wheel reaches the steering stop; the rear-axle midpoint is T/2
        # further out from the turn centre than the inner rear wheel.
        r_mid = self.wheelbase_m / math.tan(self.max_steer_rad) + 0.5 * self.track_m
        self.min_turn_radius_m = max(r_mid, float(min_turn_radius_m))
        half = 0.5 * self.track_m
        self.positions = {"front_left": (self.wheelbase_m, half),
                          "front_right": (self.wheelbase_m, -half),
                          "rear_left": (0.0, half), "rear_right": (0.0, -half)}

    def inverse(self, vx, vy, omega, hold_angles=None) -> WheelCommands:
        vx, omega = np.broadcast_arrays(np.asarray(vx, float), np.asarray(omega, float))
        hold = hold_angles or {}
        r = self.wheel_radius_m
        rates, angles = {}, {}
        for n, (x, y) in self.positions.items():
            cx, cy = vx - omega * y, omega * x
            if n in self.steered_wheels:
                rates[n], angles[n] = _steered_wheel(cx, cy, r, hold.get(n, 0.0))
            else:
                rates[n] = cx / r
        return WheelCommands(rates, angles)

    def forward(self, commands: WheelCommands):
        rows, rhs = [], []
        r = self.wheel_radius_m
        for n, (x, y) in self.positions.items():
            rate = np.asarray(commands.rate_radps[n], float)
            a = np.asarray(commands.angle_rad.get(n, np.zeros_like(rate)), float)
            roll, lat = _rolling_rows(x, y, a)
            rows += [roll, lat]
            rhs += [r * rate, np.zeros_like(rate)]
        return _least_squares(rows, rhs)


def corner_positions(wheelbase_m: float, track_m: float) -> dict[str, tuple[float, float]]:
    """Body-frame contact points of four wheels at the corners of wheelbase x track, about
    the centre of the wheel rectangle (the mecanum and swerve reference point)."""
    lx, ly = 0.5 * wheelbase_m, 0.5 * track_m
    return {"front_left": (lx, ly), "front_right": (lx, -ly),
            "rear_left": (-lx, ly), "rear_right": (-lx, -ly)}


class MecanumDrive(DriveModel):
    """Four mecanum wheels with 45 degree rollers at the corners of wheelbase x track."""

    name = "mecanum"
    wheel_names = WHEELS4
    holonomic = True
    can_pivot = True

    # tan(gamma_i): the roller's free direction relative to the wheel's driving direction.
    TAN_GAMMA = {"front_left": -1.0, "front_right": 1.0, "rear_left": 1.0, "rear_right": -1.0}

    def __init__(self, wheel_radius_m: float, wheelbase_m: float, track_m: float,
                 min_turn_radius_m: float = 0.0) -> None:
        self.wheel_radius_m = float(wheel_radius_m)
        self.wheelbase_m = float(wheelbase_m)
        self.track_m = float(track_m)
        self.min_turn_radius_m = float(min_turn_radius_m)
        self.positions = corner_positions(self.wheelbase_m, self.track_m)
        # u = H @ (vx, vy, omega): Lynch & Park sec. 13.2, rows reordered to WHEELS4.
        self.H = np.array([[1.0, self.TAN_GAMMA[n], x * self.TAN_GAMMA[n] - y]
                           for n, (x, y) in self.positions.items()]) / self.wheel_radius_m
        self.H_pinv = np.linalg.pinv(self.H)

    def inverse(self, vx, vy, omega, hold_angles=None) -> WheelCommands:
        twist = np.stack(np.broadcast_arrays(*(np.asarray(a, float) for a in (vx, vy, omega))),
                         axis=-1)
        u = twist @ self.H.T
        return WheelCommands({n: u[..., i] for i, n in enumerate(self.wheel_names)})

    def forward(self, commands: WheelCommands):
        u = commands.rates(self.wheel_names)
        twist = u @ self.H_pinv.T
        return twist[..., 0], twist[..., 1], twist[..., 2]

    def critical_course_angles(self) -> NDArray[np.float64]:
        # Rate is (cos phi + tan(g) sin phi + const) / r: extremal at phi = atan2(tan g, 1).
        return unique_sorted(np.arctan2(np.array(list(self.TAN_GAMMA.values())), 1.0))


class SwerveDrive(DriveModel):
    """Four independently steered and driven modules at the corners of wheelbase x track."""

    name = "swerve"
    wheel_names = WHEELS4
    steered_wheels = WHEELS4
    holonomic = True
    can_pivot = True

    def __init__(self, wheel_radius_m: float, wheelbase_m: float, track_m: float,
                 min_turn_radius_m: float = 0.0) -> None:
        self.wheel_radius_m = float(wheel_radius_m)
        self.wheelbase_m = float(wheelbase_m)
        self.track_m = float(track_m)
        self.min_turn_radius_m = float(min_turn_radius_m)
        self.positions = corner_positions(self.wheelbase_m, self.track_m)

    def inverse(self, vx, vy, omega, hold_angles=None) -> WheelCommands:
        vx, vy, omega = np.broadcast_arrays(*(np.asarray(a, float) for a in (vx, vy, omega)))
        hold = hold_angles or {}
        rates, angles = {}, {}
        for n, (x, y) in self.positions.items():
            # Rigid body: module velocity = v + omega x r_i.
            rates[n], angles[n] = _steered_wheel(vx - omega * y, vy + omega * x,
                                                 self.wheel_radius_m, hold.get(n, 0.0))
        return WheelCommands(rates, angles)

    def forward(self, commands: WheelCommands):
        rows, rhs = [], []
        r = self.wheel_radius_m
        for n, (x, y) in self.positions.items():
            rate = np.asarray(commands.rate_radps[n], float)
            roll, lat = _rolling_rows(x, y, np.asarray(commands.angle_rad[n], float))
            rows += [roll, lat]
            rhs += [r * rate, np.zeros_like(rate)]
        return _least_squares(rows, rhs)

    def critical_course_angles(self) -> NDArray[np.float64]:
        # |v_i|^2 = 1 + w^2 |r_i|^2 + 2 w (x_i sin phi - y_i cos phi): extremal at
        # phi = atan2(x_i, -y_i).
        xy = np.array(list(self.positions.values()))
        return unique_sorted(np.arctan2(xy[:, 0], -xy[:, 1]))


# -- factory --------------------------------------------------------------------------------
def _need(chassis, key: str, file: str) -> float:
    v = getattr(chassis, key, None)
    if v is None or not isinstance(v, (int, float)) or not math.isfinite(v) or v <= 0:
        raise ValidationError(file, f"chassis.{key}",
                              f"a positive number; a {chassis.drive} chassis needs {key}")
    return float(v)


def drive_for(chassis, file: str = "<chassis>") -> DriveModel:
    """The drive model of a :class:`kinematics.files.project.Chassis`.

    Parameters
    ----------
    chassis : Chassis
        Needs ``wheel_radius_m`` and the drive's dimensions (differential ``track_m``;
        bicycle ``wheelbase_m``, ``max_steer_deg``; ackermann ``wheelbase_m``, ``track_m``,
        ``max_steer_deg``; mecanum and swerve ``wheelbase_m``, ``track_m``).
    file : str
        Named in the error when a dimension is missing.

    Raises
    ------
    ValidationError
        A required dimension is missing or not positive, or the drive is unknown.

    Examples
    --------
    >>> from kinematics.files.project import Chassis
    >>> d = drive_for(Chassis(drive="bicycle", wheelbase_m=1.0, max_steer_deg=45.0))
    >>> round(d.min_turn_radius_m, 6), d.can_pivot
    (1.0, False)
    """
    drive = getattr(chassis, "drive", None)
    r = _need(chassis, "wheel_radius_m", file)
    rmin = float(getattr(chassis, "min_turn_radius_m", 0.0) or 0.0)
    if drive == "differential":
        factor = float(getattr(chassis, "effective_track_factor", 1.0) or 1.0)
        if not factor > 0:
            raise ValidationError(file, "chassis.effective_track_factor", "a positive number")
        return DifferentialDrive(r, _need(chassis, "track_m", file), factor, rmin)
    if drive in ("bicycle", "ackermann"):
        steer = _need(chassis, "max_steer_deg", file)
        if steer >= 90.0:
            raise ValidationError(file, "chassis.max_steer_deg",
                                  f"an angle below 90 degrees, got {steer}")
        if drive == "bicycle":
            return BicycleDrive(r, _need(chassis, "wheelbase_m", file), steer, rmin)
        return AckermannDrive(r, _need(chassis, "wheelbase_m", file),
                              _need(chassis, "track_m", file), steer, rmin)
    if drive == "mecanum":
        return MecanumDrive(r, _need(chassis, "wheelbase_m", file),
                            _need(chassis, "track_m", file), rmin)
    if drive == "swerve":
        return SwerveDrive(r, _need(chassis, "wheelbase_m", file),
                           _need(chassis, "track_m", file), rmin)
    raise ValidationError(file, "chassis.drive",
                          "one of differential, bicycle, ackermann, mecanum, swerve")
