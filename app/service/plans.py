"""Station plans, as a mixin of the field service: the planned stations of a visit, the rules of
editing them (tape distances are never negative, a read station stays), a uniform plan from the
distance and a count, the previous visit's plan offered on a repeat visit, and where the crew is
along the plan.

Every rule about a plan lives here; the spacing and readings screens show what these return.
"""

from __future__ import annotations

from stakeline.app.service.util import (
    ServiceError,
    count_words,
    next_station,
    parse_number,
    uniform_stations,
)


def _rounded(stations) -> list[float]:
    """Stations as stored: sorted, rounded to 6 decimals, duplicates dropped."""
    return sorted({round(float(s), 6) for s in stations})


class StationPlans:
    """Mixin of :class:`stakeline.app.service.FieldService` (needs ``self.store`` and
    ``readings``): the visit's station plan."""

    def plan(self, visit_uuid: str) -> list[float]:
        """The planned stations of a visit (survey unit), in order."""
        return sorted(self.store.planned_stations(visit_uuid))

    def save_plan(self, visit_uuid: str, stations) -> list[float]:
        """Replace the plan with these stations (duplicates dropped, sorted); returns it."""
        plan = _rounded(stations)
        if any(s < 0 for s in plan):
            raise ServiceError("stations are tape distances and cannot be negative")
        self.store.set_planned_stations(visit_uuid, plan)
        return plan

    def add_to_plan(self, visit_uuid: str, station: float) -> list[float]:
        """Insert one station into the plan (a slope break, a water's edge...); returns the plan."""
        return self.save_plan(visit_uuid, [*self.plan(visit_uuid), station])

    def remove_from_plan(self, visit_uuid: str, station: float) -> list[float]:
        """Drop one planned station that has no reading yet; returns the plan."""
        return self.save_plan(
            visit_uuid, self.plan_without(visit_uuid, self.plan(visit_uuid), station)
        )

    # --- a plan being edited (not saved yet) ----------------------------------------------------
    @staticmethod
    def plan_with(stations, station: float) -> list[float]:
        """``stations`` with ``station`` inserted (not saved); ServiceError when it is negative."""
        if station < 0:
            raise ServiceError("stations are tape distances and cannot be negative")
        return _rounded([*stations, station])

    def plan_without(self, visit_uuid: str, stations, station: float) -> list[float]:
        """``stations`` without ``station`` (not saved); ServiceError when it has a reading."""
        if any(r["station"] == station for r in self.readings(visit_uuid)):
            raise ServiceError(f"station {station:g} has a reading; remove the reading first")
        return [s for s in _rounded(stations) if s != round(float(station), 6)]

    @staticmethod
    def merge_plan(plan, read) -> list[float]:
        """A plan with the stations already read added (they always stay in the plan)."""
        return _rounded([*plan, *read])

    @staticmethod
    def suggest_plan(distance_text: str, count_text: str) -> dict:
        """A uniform plan from the typed distance between the stakes and station count:
        ``stations`` and ``text`` ("Spacing 0.5 m, 21 stations")."""
        if not str(distance_text).strip() or not str(count_text).strip():
            raise ServiceError("type the distance between stakes and a station count")
        distance = parse_number(distance_text, "distance between stakes")
        count = parse_number(count_text, "station count")
        stations = uniform_stations(distance, int(count))
        step = stations[1] - stations[0]
        return {"stations": stations, "text": f"Spacing {step:g}, {count_words(len(stations))}"}

    def previous_plan(self, visit_uuid: str) -> dict | None:
        """The plan of the section's previous visit (its planned and read stations), offered on
        a repeat visit: ``stations`` and ``text`` for the button; None when there is none (or
        it was in another unit)."""
        visit = self.store.visit(visit_uuid)
        earlier = [
            v
            for v in self.store.visits(visit["section_uuid"])
            if v["uuid"] != visit_uuid and v["unit"] == visit["unit"] and v["date"] <= visit["date"]
        ]
        for last in reversed(earlier):
            read = [r["station"] for r in self.store.stations(last["uuid"]) if not r.get("removed")]
            stations = _rounded([*last["planned_stations"], *read])
            if len(stations) >= 2:
                return {
                    "stations": stations,
                    "text": f"Use the last visit's plan ({last['date']}, "
                    f"{count_words(len(stations))})",
                }
        return None

    # --- where the crew is ---------------------------------------------------------------------
    def stations_of(self, visit_uuid: str, current: float | None = None) -> list[float]:
        """Every station of the visit in tape order: planned, read, and ``current`` (a station
        just typed to go to counts before its reading is saved)."""
        extra = [] if current is None else [current]
        return _rounded([*self.plan(visit_uuid), *(r["station"] for r in self.readings(visit_uuid)),
                         *extra])  # fmt: skip

    def position(self, visit_uuid: str, station: float | None) -> dict:
        """Where ``station`` is: ``index`` (1-based), ``total`` stations, ``read`` so far and
        ``text`` ("4 of 22 · 3 read")."""
        stations = self.stations_of(visit_uuid, station)
        index = stations.index(round(float(station), 6)) + 1 if station is not None else 0
        read = len(self.readings(visit_uuid))
        return {
            "index": index,
            "total": len(stations),
            "read": read,
            "text": f"{index} of {len(stations)} · {read} read",
        }

    def step_station(self, visit_uuid: str, station: float | None, direction: int) -> float | None:
        """The station before (-1) or after (+1) ``station`` among the plan and the readings."""
        stations = self.stations_of(visit_uuid)
        if not stations:
            return None
        if station in stations:
            index = max(0, min(len(stations) - 1, stations.index(station) + direction))
        else:
            later = [s for s in stations if station is not None and s > station]
            index = stations.index(later[0]) if later and direction > 0 else len(stations) - 1
        return stations[index]

    @staticmethod
    def station_to_visit(text: str) -> float:
        """The station typed to go to (or insert), else ServiceError."""
        station = parse_number(text, "station")
        if station < 0:
            raise ServiceError("stations are tape distances and cannot be negative")
        return round(station, 6)

    def next_station(self, visit_uuid: str, current: float | None) -> float | None:
        """The station to read after ``current`` (see :func:`stakeline.app.service.util.next_station`)."""
        read = {r["station"] for r in self.readings(visit_uuid)}
        return next_station(self.plan(visit_uuid), read, current)
