"""Write the invented demo floor plans and projects in this folder.

Run from the repository root: ``python sample_floorplans/make_samples.py``. The scenarios,
their dimensions and where the dimensions come from are in ``README.md`` beside this file;
the numbers here are the ones the README states. Every plan is invented.

Walls are drawn on their centrelines; a door is the gap between two wall ends, so the door
width is the clear opening between the jambs.
"""

from __future__ import annotations

import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent))

from kinematics.files.floorplan import (  # noqa: E402
    Door,
    FloorPlan,
    Obstacle,
    Wall,
    floorplan_to_dict,
    solids,
)
from kinematics.files.jsonio import write_json  # noqa: E402

INTERIOR_M = 0.15  # partition thickness, common practice (100-150 mm stud walls)
EXTERIOR_M = 0.3


class Plan:
    """Collects walls, obstacles and doors while a plan is drawn."""

    def __init__(self, name: str) -> None:
        self.name = name
        self.walls: list[Wall] = []
        self.obstacles: list[Obstacle] = []
        self.doors: list[Door] = []

    def wall(self, pts, t: float = INTERIOR_M) -> None:
        self.walls.append(Wall(tuple((float(x), float(y)) for x, y in pts), t))

    def run(self, a, b, openings=(), t: float = INTERIOR_M) -> None:
        """A straight wall from ``a`` to ``b`` with door gaps.

        ``openings`` are ``(offset_m, width_m, label)`` along the wall from ``a``; a label of
        ``None`` leaves an opening that is not a door (an open archway).
        """
        (ax, ay), (bx, by) = a, b
        length = ((bx - ax) ** 2 + (by - ay) ** 2) ** 0.5
        ux, uy = (bx - ax) / length, (by - ay) / length
        at = 0.0
        for off, width, label in sorted(openings, key=lambda o: o[0]):
            if off > at:
                self.wall([(ax + ux * at, ay + uy * at), (ax + ux * off, ay + uy * off)], t)
            ja = (round(ax + ux * off, 6), round(ay + uy * off, 6))
            jb = (round(ax + ux * (off + width), 6), round(ay + uy * (off + width), 6))
            if label is not None:
                self.doors.append(Door(ja, jb, label))
            at = off + width
        if at < length:
            self.wall([(ax + ux * at, ay + uy * at), (bx, by)], t)

    def box(self, x0, y0, x1, y1, label: str) -> None:
        self.obstacles.append(Obstacle(((x0, y0), (x1, y0), (x1, y1), (x0, y1)), label))

    def floorplan(self) -> FloorPlan:
        return FloorPlan(self.name, tuple(self.walls), tuple(self.obstacles), tuple(self.doors))


def gap(x_centre: float, start: float, width: float) -> float:
    """Offset along a wall starting at ``start`` of a ``width`` door centred on ``x_centre``."""
    return round(x_centre - width / 2.0 - start, 6)


# -- Larchmere Clinic, level 2 --------------------------------------------------------------
CORRIDOR_CLEAR_M = 2.44  # 8 ft hospital corridor, from memory
CLINIC_W, CLINIC_H = 42.0, 20.0
Y_S = 10.0 - CORRIDOR_CLEAR_M / 2 - INTERIOR_M / 2  # corridor south wall centreline
Y_N = 10.0 + CORRIDOR_CLEAR_M / 2 + INTERIOR_M / 2  # corridor north wall centreline
LOBBY_N = 15.5  # lift lobby north wall (lift door wall) centreline
LIFT_CAR_W, LIFT_CAR_D = 1.6, 2.7  # bed-lift car interior, from memory
LIFT_DOOR_M = 1.1  # lift car door, from memory
LIFTS_X = (32.55, 35.55)  # lift car centre lines


def clinic() -> FloorPlan:
    p = Plan("Larchmere Clinic, level 2")
    p.wall([(0, 0), (CLINIC_W, 0), (CLINIC_W, CLINIC_H), (0, CLINIC_H), (0, 0)], EXTERIOR_M)
    # Corridor south wall: pharmacy, patient rooms 201-206, store, sluice, staff room.
    south = [(gap(3.1, 0, 1.2), 1.2, "pharmacy")]
    for k, xc in enumerate((8.0, 12.0, 16.0, 20.0, 24.0, 28.0)):
        south.append((gap(xc, 0, 1.2), 1.2, f"room {201 + k}"))
    south += [(gap(31.5, 0, 0.815), 0.815, "store"),
              (gap(34.5, 0, 0.68), 0.68, "sluice"),
              (gap(38.9, 0, 0.915), 0.915, "staff room")]
    p.run((0, Y_S), (CLINIC_W, Y_S), south)
    for x in (6, 10, 14, 18, 22, 26, 30, 33, 36):
        p.run((x, 0), (x, Y_S))
    # Corridor north wall: Ward B double door, rooms 207-210, open lift lobby, stair core.
    north = [(gap(8.2, 0, 1.6), 1.6, "Ward B"),
             (gap(17.75, 0, 1.2), 1.2, "room 207"), (gap(21.25, 0, 1.2), 1.2, "room 208"),
             (gap(24.75, 0, 1.2), 1.2, "room 209"), (gap(28.25, 0, 1.2), 1.2, "room 210"),
             (31.0, 6.0, None)]
    p.run((0, Y_N), (CLINIC_W, Y_N), north)
    for x in (16, 19.5, 23, 26.5):
        p.run((x, Y_N), (x, CLINIC_H))
    p.run((30, Y_N), (30, CLINIC_H))
    p.run((38, Y_N), (38, CLINIC_H))
    # Lift lobby: the lift door wall with one car door per lift, the cars behind it.
    lifts = [(gap(xc, 30, LIFT_DOOR_M), LIFT_DOOR_M, f"lift {k + 1}")
             for k, xc in enumerate(LIFTS_X)]
    p.run((30, LOBBY_N), (38, LOBBY_N), lifts)
    car_t = 0.1
    back = LOBBY_N + INTERIOR_M / 2 + LIFT_CAR_D + car_t / 2
    for xc in LIFTS_X:
        half = LIFT_CAR_W / 2 + car_t / 2
        p.wall([(xc - half, LOBBY_N), (xc - half, back), (xc + half, back),
                (xc + half, LOBBY_N)], car_t)
    p.box(33.5, LOBBY_N + 0.1, 34.6, back, "lift shaft structure")
    # Furniture and fittings.
    p.box(0.3, 1.0, 0.9, 8.0, "pharmacy shelving")
    p.box(4.5, 1.0, 5.8, 4.0, "dispensing counter")
    for k, x0 in enumerate((6, 10, 14, 18, 22, 26)):
        p.box(x0 + 1.5, 0.8, x0 + 2.4, 2.9, f"bed, room {201 + k}")  # 0.9 x 2.1 m bed
    for k, x0 in enumerate((1.5, 4.5, 10.5, 13.5)):
        p.box(x0, 17.5, x0 + 0.9, 19.6, f"bed B{k + 1}")
    p.box(1.0, 12.2, 3.0, 13.0, "Ward B nurse station")
    for k, x0 in enumerate((16, 19.5, 23, 26.5)):
        p.box(x0 + 2.2, 17.2, x0 + 3.1, 19.3, f"bed, room {207 + k}")
    p.box(30.2, 0.5, 30.8, 7.5, "store shelving west")
    p.box(32.2, 0.5, 32.8, 7.5, "store shelving east")
    p.box(33.3, 0.3, 35.7, 0.9, "sluice sink unit")
    p.box(38.0, 3.0, 40.0, 4.2, "staff table")
    p.box(12.0, 11.07, 12.3, 11.2, "hand-gel station")
    p.box(38.4, 12.0, 41.6, 19.6, "stair core")
    return p.floorplan()


# -- Brackenfield Distribution Depot ----------------------------------------------------------
DEPOT_W, DEPOT_H = 60.0, 40.0
DOCK_DOOR_M = 3.0  # dock door width, common practice (about 3 m), from memory
DOCKS_X0 = (8.0, 14.0, 20.0, 26.0)
RACK_DOUBLE_M = 2.4  # back-to-back pallet racking, 2 x 1.1 m deep + 0.2 m flue, from memory
WIDE_AISLE_M = 3.2  # counterbalance truck aisle, common practice 3.0-3.5 m, from memory
NARROW_AISLE_M = 1.8  # narrow-aisle truck aisle, common practice about 1.8 m, from memory
RACK_Y = (12.0, 34.0)


def wide_rows() -> list[tuple[float, float]]:
    rows, x = [], 4.0
    for _ in range(5):
        rows.append((x, x + RACK_DOUBLE_M))
        x += RACK_DOUBLE_M + WIDE_AISLE_M
    return rows


def narrow_rows() -> list[tuple[float, float]]:
    rows, x = [], 34.0
    for _ in range(4):
        rows.append((x, x + RACK_DOUBLE_M))
        x += RACK_DOUBLE_M + NARROW_AISLE_M
    return rows


def depot() -> FloorPlan:
    p = Plan("Brackenfield Distribution Depot, ground floor")
    docks = [(x0, DOCK_DOOR_M, f"dock {k + 1}") for k, x0 in enumerate(DOCKS_X0)]
    docks.append((45.0, 1.0, "personnel door"))
    p.run((0, 0), (DEPOT_W, 0), docks, EXTERIOR_M)
    p.wall([(DEPOT_W, 0), (DEPOT_W, DEPOT_H), (0, DEPOT_H), (0, 0)], EXTERIOR_M)
    for k, (x0, x1) in enumerate(wide_rows()):
        p.box(x0, RACK_Y[0], x1, RACK_Y[1], f"racking row {k + 1}")
    for k, (x0, x1) in enumerate(narrow_rows()):
        p.box(x0, RACK_Y[0], x1, RACK_Y[1], f"racking row {k + 6}")
    for y in (12.0, 23.0, 33.6):  # building columns, 0.4 m square
        p.box(29.6, y, 30.0, y + 0.4, "column")
    # Transport office in the north-east corner, with its door on the south side.
    p.run((52.0, 30.0), (DEPOT_W, 30.0), [(2.0, 1.0, "office")])
    p.run((52.0, 30.0), (52.0, DEPOT_H))
    p.box(55.0, 20.0, 58.5, 23.0, "charging station")
    p.box(2.0, 3.0, 5.0, 6.0, "pallet wrapper")
    return p.floorplan()


# -- Test room --------------------------------------------------------------------------------
TEST_DOOR_M = 0.8


def test_room() -> FloorPlan:
    p = Plan("test room with an L-shaped corridor")
    t = 0.1
    p.wall([(5, 1.6), (5, 0), (0, 0), (0, 4), (5, 4), (5, 2.4)], t)
    p.doors.append(Door((5.0, 1.6), (5.0, 2.4), "test door"))
    half = 0.6 + t / 2  # 1.2 m clear corridor
    p.wall([(5, 2.0 - half), (10.4 + half, 2.0 - half), (10.4 + half, 7.0),
            (10.4 - half, 7.0), (10.4 - half, 2.0 + half), (5, 2.0 + half)], t)
    p.box(0.5, 3.0, 1.5, 3.6, "bench")
    return p.floorplan()


# -- chassis ----------------------------------------------------------------------------------
def rect(x0: float, x1: float, half_w: float) -> list[list[float]]:
    return [[x0, -half_w], [x1, -half_w], [x1, half_w], [x0, half_w]]


CLINIC_CART = {  # hospital delivery cart, 1.0 x 0.6 m body, differential drive
    "name": "hospital delivery cart", "drive": "differential",
    "footprint": rect(-0.35, 0.65, 0.3), "margin_m": 0.05, "wheel_radius_m": 0.1,
    "track_m": 0.5, "min_turn_radius_m": 0.0, "max_speed_mps": 1.0, "max_accel_mps2": 0.4,
    "max_wheel_rate_radps": 12.0, "max_lateral_accel_mps2": 0.5, "max_yaw_rate_dps": 60.0,
}
CLINIC_MECANUM = {
    "name": "mecanum linen cart", "drive": "mecanum", "footprint": rect(-0.6, 0.6, 0.35),
    "margin_m": 0.05, "wheel_radius_m": 0.076, "wheelbase_m": 0.9, "track_m": 0.6,
    "max_speed_mps": 0.8, "max_accel_mps2": 0.4, "max_wheel_rate_radps": 15.0,
}
CLINIC_SWERVE = {
    "name": "swerve supply cart", "drive": "swerve", "footprint": rect(-0.65, 0.65, 0.4),
    "margin_m": 0.05, "wheel_radius_m": 0.1, "wheelbase_m": 0.9, "track_m": 0.6,
    "max_speed_mps": 1.0, "max_accel_mps2": 0.5, "max_wheel_rate_radps": 12.0,
}
DEPOT_MOVER = {  # pallet mover carrying a 1200 x 800 mm pallet (ISO 6780 size, from memory)
    "name": "pallet mover", "drive": "differential", "footprint": rect(-0.6, 0.75, 0.425),
    "margin_m": 0.1, "wheel_radius_m": 0.125, "track_m": 0.65, "max_speed_mps": 1.5,
    "max_accel_mps2": 0.5, "max_wheel_rate_radps": 14.0, "max_lateral_accel_mps2": 0.6,
}
DEPOT_TUG = {  # four-wheel tow tug, car-like steering
    "name": "ackermann tow tug", "drive": "ackermann", "footprint": rect(-0.3, 1.5, 0.5),
    "margin_m": 0.1, "wheel_radius_m": 0.2, "wheelbase_m": 1.2, "track_m": 0.8,
    "max_steer_deg": 35.0, "max_speed_mps": 2.0, "max_accel_mps2": 0.6,
    "max_lateral_accel_mps2": 0.8,
}
DEPOT_TRIKE = {  # three-wheel pallet truck: one steered drive wheel at the front
    "name": "three-wheel pallet truck", "drive": "bicycle", "footprint": rect(-0.4, 1.5, 0.45),
    "margin_m": 0.1, "wheel_radius_m": 0.125, "wheelbase_m": 1.3, "max_steer_deg": 60.0,
    "max_speed_mps": 1.6, "max_accel_mps2": 0.5, "max_lateral_accel_mps2": 0.7,
}
TEST_BOT = {
    "name": "test robot", "drive": "differential", "footprint": rect(-0.15, 0.35, 0.225),
    "margin_m": 0.05, "wheel_radius_m": 0.075, "track_m": 0.4, "max_speed_mps": 0.6,
    "max_accel_mps2": 0.3, "max_wheel_rate_radps": 10.0,
}

WARD_TUG = {  # small ward tug towing two linen carts (carts about 0.9 x 0.6 m, common practice)
    "name": "ward tug", "drive": "differential", "footprint": rect(-0.25, 0.55, 0.28),
    "margin_m": 0.05, "wheel_radius_m": 0.1, "track_m": 0.46, "max_speed_mps": 0.8,
    "max_accel_mps2": 0.3, "max_wheel_rate_radps": 10.0, "max_lateral_accel_mps2": 0.4,
    "trailers": [
        {"name": "linen cart", "hitch_x_m": -0.35, "drawbar_m": 0.75,
         "footprint": [[-0.45, -0.3], [0.4, -0.3], [0.4, 0.3], [-0.45, 0.3]]},
        {"name": "meal cart", "hitch_x_m": -0.55, "drawbar_m": 0.7,
         "footprint": [[-0.45, -0.3], [0.4, -0.3], [0.4, 0.3], [-0.45, 0.3]],
         "max_hitch_deg": 75.0},
    ],
}


def route(name, waypoints, turn_radius_m=0.0, reverse=False, **extra):
    d = {"name": name, "waypoints": [list(w) for w in waypoints],
         "turn_radius_m": turn_radius_m, "reverse": reverse}
    d.update(extra)
    return d


def project(floorplan, chassis, routes, **extra):
    d = {"swathe_project": 1, "floorplan": floorplan, "chassis": chassis, "routes": routes}
    d.update(extra)
    return d


CLINIC_ROUTES = [
    route("pharmacy-to-ward", [(3.1, 5.0, 90), (3.1, 10.0), (8.2, 10.0), (8.2, 14.0)],
          note="clear: 1.2 m pharmacy door and 1.6 m ward double door"),
    route("ward-to-lift-1", [(8.2, 14.0), (8.2, 10.0), (32.55, 10.0), (32.55, 17.0, 90)],
          note="clear: into the bed-lift car through its 1.1 m door"),
    route("corridor-to-store", [(26.0, 10.0, 0), (31.5, 10.0), (31.5, 6.0)],
          note="tight but clear: the 815 mm store door leaves about 0.11 m a side"),
    route("corridor-to-sluice", [(26.0, 10.0, 0), (34.5, 10.0), (34.5, 6.5)],
          note="violation: the 0.68 m sluice door leaves 0.04 m a side, below the margin"),
]

DEPOT_ROUTES = [
    route("dock-2-to-aisle-3", [(15.5, 2.0, 90), (15.5, 9.0), (19.2, 9.0), (19.2, 25.0)]),
    route("dock-4-to-narrow-aisle", [(27.5, 2.0, 90), (27.5, 8.0), (37.3, 8.0),
                                     (37.3, 20.0)]),
    route("aisle-3-to-charger", [(19.2, 25.0, 90), (19.2, 36.5), (50.5, 36.5), (50.5, 21.5),
                                 (54.0, 21.5, 0)], turn_radius_m=1.0),
]


def main() -> None:
    plans = {"clinic": clinic(), "depot": depot(), "test_room": test_room()}
    for name, fp in plans.items():
        write_json(HERE / f"{name}.floor.json", floorplan_to_dict(fp))
        assert solids(fp)
    write_json(HERE / "demo.swathe.json", project(
        "clinic.floor.json", CLINIC_CART, CLINIC_ROUTES,
        description="Larchmere Clinic, level 2: a delivery cart's routes; the sluice route "
                    "has a door too narrow for the cart's margin."))
    write_json(HERE / "clinic.swathe.json", project(
        "clinic.floor.json", CLINIC_CART, CLINIC_ROUTES[:3] + [
            route("ward-to-room-208", [(8.2, 14.0), (8.2, 10.0), (21.25, 10.0),
                                       (21.25, 13.5)], turn_radius_m=0.8)]))
    write_json(HERE / "clinic_mecanum.swathe.json", project(
        "clinic.floor.json", CLINIC_MECANUM, [
            route("corridor-to-store", [(26.0, 10.0, 0), (31.5, 10.0, 90), (31.5, 6.0, 90)],
                  note="tight: 0.7 m wide cart in the 815 mm store door"),
            route("strafe-to-room-203", [(12.0, 10.0, 0), (16.0, 10.0, 90), (16.0, 6.0, 90)]),
        ]))
    write_json(HERE / "clinic_swerve.swathe.json", project(
        "clinic.floor.json", CLINIC_SWERVE, [
            route("ward-to-room-208", [(8.2, 14.0, 90), (8.2, 10.0, 90), (21.25, 10.0, 90),
                                       (21.25, 13.8, 90)]),
            route("lobby-to-lift-2", [(26.0, 10.0, 0), (35.55, 10.0, 90),
                                      (35.55, 17.0, 90)]),
        ]))
    write_json(HERE / "clinic_train.swathe.json", project(
        "clinic.floor.json", WARD_TUG, [
            route("linen-to-ward-b", [(4.2, 9.6, 0), (8.2, 9.6), (8.2, 14.0)],
                  turn_radius_m=1.2, note="a tug with two carts through the Ward B door: the "
                                          "carts cut inside the tug's turn"),
            route("supply-return", [(20.0, 10.4, 180), (4.0, 10.4)],
                  chassis="hospital delivery cart",
                  note="the delivery cart back along the corridor, against the tug"),
        ], fleet=[CLINIC_CART],
        description="Larchmere Clinic, level 2: a ward tug towing two carts and the delivery "
                    "cart sharing the corridor."))
    write_json(HERE / "depot.swathe.json", project("depot.floor.json", DEPOT_MOVER,
                                                   DEPOT_ROUTES))
    write_json(HERE / "depot_ackermann.swathe.json", project(
        "depot.floor.json", DEPOT_TUG, [
            route("dock-1-to-main-aisle", [(9.5, 2.0, 90), (12.0, 4.5, 0), (31.4, 7.0, 90),
                                           (31.4, 36.5, 90)], turn_radius_m=2.5),
            route("cross-aisle-to-office-side", [(20.0, 36.8, 0), (48.0, 36.8, 0),
                                                 (50.5, 26.0, -90)], turn_radius_m=2.5),
        ]))
    write_json(HERE / "depot_bicycle.swathe.json", project(
        "depot.floor.json", DEPOT_TRIKE, [
            route("dock-3-to-aisle-2", [(21.5, 2.0, 90), (21.5, 4.5, 90), (17.5, 7.0, 180),
                                        (13.6, 9.0, 90), (13.6, 22.0, 90)], turn_radius_m=1.5),
            route("aisle-4-out", [(24.8, 30.0, 90), (24.8, 36.5, 90), (31.4, 36.5, -90),
                                  (31.4, 10.0, -90)], turn_radius_m=1.5),
        ]))
    smooth_cart = dict(CLINIC_CART, name="hospital delivery cart, rate-limited",
                       max_wheel_accel_radps2=6.0, max_yaw_accel_dps2=90.0)
    write_json(HERE / "clinic_smooth.swathe.json", project(
        "clinic.floor.json", smooth_cart, [
            route("ward-to-room-208", [(8.2, 14.0), (8.2, 10.0), (21.25, 10.0),
                                       (21.25, 13.5)], turn_radius_m=0.8,
                  note="transitions absent: clothoid, as the chassis gives rate limits"),
            route("ward-to-room-208-plain", [(8.2, 14.0), (8.2, 10.0), (21.25, 10.0),
                                             (21.25, 13.5)], turn_radius_m=0.8,
                  transitions="none", note="the same without transitions: it stops to turn"),
        ]))
    smooth_tug = dict(DEPOT_TUG, name="ackermann tow tug, rate-limited",
                      max_steer_rate_dps=30.0, max_wheel_accel_radps2=4.0,
                      note="the tug's turn onto the office side starts 1.5 m earlier than in "
                           "depot_ackermann: its transition curves need the room")
    write_json(HERE / "depot_ackermann_smooth.swathe.json", project(
        "depot.floor.json", smooth_tug, [
            route("cross-aisle-to-office-side", [(20.0, 36.8, 0), (46.5, 36.8, 0),
                                                 (50.5, 26.0, -90)], turn_radius_m=2.5),
        ]))
    write_json(HERE / "test_room.swathe.json", project(
        "test_room.floor.json", TEST_BOT, [
            route("room-to-corridor-end", [(2.5, 2.0, 0), (10.4, 2.0), (10.4, 6.0)]),
            route("corridor-end-to-room", [(10.4, 6.0, -90), (10.4, 2.0), (2.5, 2.0)],
                  turn_radius_m=0.5),
        ]))
    write_json(HERE / "test_room_dxf.swathe.json", project(
        {"file": "test_room.dxf", "layers": {"walls": ["WALLS"], "obstacles": ["FIXTURES"],
                                             "doors": ["DOORS"]}, "units": "mm"},
        TEST_BOT, [route("room-to-corridor-end", [(2.5, 2.0, 0), (10.4, 2.0), (10.4, 6.0)])]))


if __name__ == "__main__":
    main()
