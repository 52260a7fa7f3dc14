"""Shared fixtures and sample entries of the store tests (tests/test_store_*.py): a GPX file
and a format version 1 library file (VERSION_1_FILE) among them.

`database` is the location of an empty library database: an SQLite file in tmp_path and, with
the `postgres` marker, the PostgreSQL server named by PACING_TEST_POSTGRES_URL
(.ci/start_postgres.sh starts one). Without that variable the PostgreSQL runs skip, except
under CI=true, where they fail. `library` is that database opened. A test module uses them by
importing `database_fixture` and `library_fixture` (pytest finds them by their fixture names).
"""

from __future__ import annotations

import base64
import hashlib
import json
import os

import pytest
import sqlalchemy as sa

from pacing.athlete import Athlete, Setup
from pacing.store.database import schema_revision
from pacing.store.library import open_library
from pacing.store.schema import TABLES

POSTGRES_ENV = "PACING_TEST_POSTGRES_URL"


# A GPX file with what byte-exact storage must keep: a UTF-8 byte order mark, CRLF line ends,
# non-ASCII text, trailing spaces and a final byte without newline.
GPX = ("\ufeff<?xml version=\"1.0\" encoding=\"UTF-8\"?>\r\n"
       "<gpx version=\"1.1\" creator=\"hand\">  \r\n"
       " <trk><name>Col de l’Été — boucle</name><trkseg>\r\n"
       "  <trkpt lat=\"45.1\" lon=\"6.1\"><ele>700.0</ele></trkpt>\r\n"
       "  <trkpt lat=\"45.2\" lon=\"6.2\"><ele>1710.5</ele></trkpt>\r\n"
       " </trkseg></trk>\r\n</gpx>").encode("utf-8")


# A library file exactly as format version 1 defines it (pacing/store/library_file.py). Later
# versions of pacing must keep importing it.
VERSION_1_FILE = """{
 "format": "pacing library", "format_version": 1,
 "exported_at": "2026-12-01T22:30:00+00:00", "exported_by": "pacing 0.1.0",
 "athletes": [{"id": 3, "name": "Ann", "body_mass": 61.0, "critical_power": 250.0,
   "w_prime": 18000.0, "height": 1.68, "flat_pace": null, "critical_speed": null,
   "d_prime": null, "created_at": "2026-11-30T08:00:00+00:00",
   "updated_at": "2026-11-30T09:00:00+01:00",
   "setups": [{"id": 8, "name": "TT bike", "bike_mass": 8.9, "drag_area": 0.23,
     "power_share": 0.95, "rolling_coefficient": 0.003, "drivetrain_efficiency": 0.976,
     "yaw_drag_table": [[0.0, 1.0], [10.0, 0.93]],
     "created_at": "2026-11-30T08:00:00+00:00", "updated_at": "2026-11-30T08:00:00+00:00"}]}],
 "courses": [{"id": 5, "name": "Tiny", "distance_m": 1000.0, "ascent_m": 12.5,
   "gpx_sha256": "b53b9a7e7640220fe6efaa08ad97e8d5db0deef003a7335b8b44666137b08906",
   "gpx_base64": "PGdweC8+",
   "created_at": "2026-11-30T08:00:00+00:00", "updated_at": "2026-11-30T08:00:00+00:00"}],
 "plans": [{"id": 9, "name": "Race day",
   "inputs": {"athlete_id": 3, "setup_id": 8, "course_id": 5, "power": 230.0},
   "strategy": "constant", "weather": null,
   "targets": [{"segment": 1, "power": 230.0, "time": 95.5}],
   "time_saved": null, "finish_time": 95.5, "library_version": "0.1.0", "notes": "",
   "created_at": "2026-11-30T08:00:00+00:00", "updated_at": "2026-11-30T08:00:00+00:00"}]
}"""


# ---------------------------------------------------------------------------------------------
# fixtures

def postgres_url() -> str:
    """The PostgreSQL test server's URL; skip without it (fail under CI=true)."""
    url = os.environ.get(POSTGRES_ENV)
    if not url:
        if os.environ.get("CI", "").lower() in ("true", "1"):
            pytest.fail(f"{POSTGRES_ENV} is not set under CI: the PostgreSQL store tests must "
                        "run (.ci/run starts the server)")
        pytest.skip(f"{POSTGRES_ENV} not set (bash .ci/start_postgres.sh starts a server)")
    return url


def _empty_postgres(url: str) -> None:
    """Drop the library's tables on the test server, so every test starts from empty."""
    engine = sa.create_engine(url, poolclass=sa.pool.NullPool)
    with engine.begin() as connection:
        connection.exec_driver_sql("DROP TABLE IF EXISTS plan_reviews, plans, courses, setups, "
                                   "athletes, teams, alembic_version CASCADE")
    engine.dispose()


@pytest.fixture(name="database",
                params=["sqlite", pytest.param("postgresql", marks=pytest.mark.postgres)])
def database_fixture(request, tmp_path) -> str:
    """The location of an empty library database."""
    if request.param == "sqlite":
        return str(tmp_path / "library.sqlite3")
    url = postgres_url()
    _empty_postgres(url)
    return url


@pytest.fixture(name="library")
def library_fixture(database):
    """The library on `database`, opened (and migrated) for the test."""
    with open_library(database) as opened:
        yield opened


# ---------------------------------------------------------------------------------------------
# sample entries

def dump(library) -> dict:
    """Every row of every table, plus the schema revision: a full picture for before/after."""
    out = {}
    with library.engine.connect() as connection:
        for table in TABLES:
            rows = connection.execute(sa.select(table).order_by(table.c.id))
            out[table.name] = [tuple(bytes(v) if isinstance(v, memoryview) else v for v in row)
                               for row in rows]
    out["schema"] = schema_revision(library.engine)
    return out


def fill(library) -> dict:
    """Two athletes with setups, two courses and three plans; returns their ids."""
    ann = library.add_athlete(Athlete(name="Ann", body_mass=61.0, critical_power=250.0,
                                      w_prime=18000.0, height=1.68))
    bo = library.add_athlete(Athlete(name="Bo", body_mass=70.2, critical_power=None,
                                     w_prime=None, height=1.81, flat_pace=245.0,
                                     critical_speed=4.3, d_prime=210.0))
    tt = library.add_setup(ann.id, Setup(name="TT bike, extensions", bike_mass=8.9,
                                         drag_area=0.23, power_share=0.95,
                                         yaw_drag_table=((0.0, 1.0), (10.0, 0.93))))
    road = library.add_setup(ann.id, Setup(name="road bike, hoods"))
    hill = library.add_course("Hill loop", GPX, 41250.0, 610.0)
    flat = library.add_course("Flat out and back", b"<gpx/>", 10000.0, 0.0)
    race = library.save_plan("Race day", plan_inputs(ann.id, tt.id, hill.id), plan_result(),
                             notes="start easy")
    easy = library.save_plan("Easy", plan_inputs(ann.id, road.id, flat.id), plan_result(0.9))
    run = library.save_plan("Run", {"athlete_id": bo.id, "course_id": flat.id, "sport":
                                    "running"}, plan_result(1.1))
    return {"ann": ann.id, "bo": bo.id, "tt": tt.id, "road": road.id, "hill": hill.id,
            "flat": flat.id, "race": race.id, "easy": easy.id, "run": run.id}


def plan_inputs(athlete_id, setup_id, course_id) -> dict:
    """Plan inputs linked to these entries (SI numbers, invented)."""
    return {
        "athlete_id": athlete_id, "setup_id": setup_id, "course_id": course_id,
        "athlete": {"body_mass": 61.0, "critical_power": 250.0, "w_prime": 18000.0},
        "setup": {"drag_area": 0.23, "bike_mass": 8.9},
        "conditions": {"temperature": 18.5, "humidity": 0.62, "wind_speed": 3.0,
                       "wind_from": 225.0},
        "strategy": {"kind": "fastest", "w_prime_reserve": 0.0},
        "segmentation": {"by": "grade", "count": 12},
    }


def plan_result(scale: float = 1.0) -> dict:
    """A plan result of 12 segments (SI numbers, invented); `scale` makes other numbers."""
    return {
        "strategy": {"kind": "fastest", "mean_power": 231.25 * scale},
        "weather": {"source": "typed", "temperature": 18.5},
        "targets": [{"segment": i, "start_m": 1000.0 * i, "power": 200.0 * scale + i / 3,
                     "time": 120.0 + i} for i in range(12)],
        "time_saved": 41.5 * scale,
        "finish_time": 3725.0 / scale,
    }


def big_library_file(n_athletes: int, plans_per_athlete: int = 2) -> str:
    """A valid library file of many entries: `n_athletes` athletes with one setup each, one
    course, and `plans_per_athlete` saved plans per athlete (invented SI numbers)."""
    stamp = "2026-11-30T08:00:00+00:00"
    gpx = b"<gpx/>"  # SHA-256 below from hashlib (FIPS 180-4)
    athletes, plans = [], []
    for i in range(1, n_athletes + 1):
        athletes.append({"id": i, "name": f"athlete {i}", "body_mass": 60.0 + i % 30,
                         "critical_power": 250.0, "w_prime": 18000.0, "height": 1.7,
                         "flat_pace": None, "critical_speed": None, "d_prime": None,
                         "created_at": stamp, "updated_at": stamp,
                         "setups": [{"id": i, "name": "road", "bike_mass": 8.0,
                                     "drag_area": 0.3, "power_share": 1.0,
                                     "rolling_coefficient": 0.004,
                                     "drivetrain_efficiency": 0.976, "yaw_drag_table": None,
                                     "created_at": stamp, "updated_at": stamp}]})
        for k in range(plans_per_athlete):
            plan_id = (i - 1) * plans_per_athlete + k + 1
            plans.append({"id": plan_id, "name": f"plan {plan_id}",
                          "inputs": {"athlete_id": i, "setup_id": i, "course_id": 1},
                          "strategy": "constant", "weather": None,
                          "targets": [{"segment": 1, "power": 230.0, "time": 95.5}],
                          "time_saved": None, "finish_time": 95.5, "library_version": "0.1.0",
                          "notes": "", "created_at": stamp, "updated_at": stamp})
    courses = [{"id": 1, "name": "Tiny", "distance_m": 1000.0, "ascent_m": 12.5,
                "gpx_sha256": hashlib.sha256(gpx).hexdigest(),
                "gpx_base64": base64.b64encode(gpx).decode(),
                "created_at": stamp, "updated_at": stamp}]
    return json.dumps({"format": "pacing library", "format_version": 1, "athletes": athletes,
                       "courses": courses, "plans": plans})
