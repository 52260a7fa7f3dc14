"""The library's tables as the code sees them (the schema at the newest migration).

The database itself is only ever created and changed by the Alembic migrations in
pacing/store_migrations; a test checks that the newest migration gives exactly these tables.
Times are stored as naive UTC (the same on every backend); JSON values as text, written by
pacing.store.jsontext so that every backend keeps them byte for byte.
"""

from __future__ import annotations

import sqlalchemy as sa

metadata = sa.MetaData()

athletes = sa.Table(
    "athletes",
    metadata,
    sa.Column("id", sa.Integer, primary_key=True),
    sa.Column("name", sa.String(200), nullable=False),
    sa.Column("body_mass", sa.Double, nullable=False),
    sa.Column("critical_power", sa.Double, nullable=True),
    sa.Column("w_prime", sa.Double, nullable=True),
    sa.Column("height", sa.Double, nullable=True),
    sa.Column("flat_pace", sa.Double, nullable=True),
    sa.Column("critical_speed", sa.Double, nullable=True),
    sa.Column("d_prime", sa.Double, nullable=True),
    sa.Column("revision", sa.Integer, nullable=False),
    sa.Column("created_at", sa.DateTime, nullable=False),
    sa.Column("updated_at", sa.DateTime, nullable=False),
)

setups = sa.Table(
    "setups",
    metadata,
    sa.Column("id", sa.Integer, primary_key=True),
    sa.Column("athlete_id", sa.Integer, sa.ForeignKey("athletes.id"), nullable=False,
              index=True),
    sa.Column("name", sa.String(200), nullable=False),
    sa.Column("bike_mass", sa.Double, nullable=False),
    sa.Column("drag_area", sa.Double, nullable=False),
    sa.Column("power_share", sa.Double, nullable=False),
    sa.Column("rolling_coefficient", sa.Double, nullable=False),
    sa.Column("drivetrain_efficiency", sa.Double, nullable=False),
    sa.Column("yaw_drag_table", sa.Text, nullable=True),
    # added by migration 0004: the drag area's interval [m²] and source (pacing.store.drag_origin)
    sa.Column("drag_area_low", sa.Double, nullable=True),
    sa.Column("drag_area_high", sa.Double, nullable=True),
    sa.Column("drag_area_source", sa.Text, nullable=True),
    sa.Column("revision", sa.Integer, nullable=False),
    sa.Column("created_at", sa.DateTime, nullable=False),
    sa.Column("updated_at", sa.DateTime, nullable=False),
)

courses = sa.Table(
    "courses",
    metadata,
    sa.Column("id", sa.Integer, primary_key=True),
    sa.Column("name", sa.String(200), nullable=False),
    sa.Column("gpx", sa.LargeBinary, nullable=False),
    sa.Column("gpx_sha256", sa.String(64), nullable=False),
    sa.Column("gpx_size", sa.Integer, nullable=False),
    sa.Column("distance_m", sa.Double, nullable=False),
    sa.Column("ascent_m", sa.Double, nullable=False),
    sa.Column("revision", sa.Integer, nullable=False),
    sa.Column("created_at", sa.DateTime, nullable=False),
    sa.Column("updated_at", sa.DateTime, nullable=False),
)

plans = sa.Table(
    "plans",
    metadata,
    sa.Column("id", sa.Integer, primary_key=True),
    sa.Column("name", sa.String(200), nullable=False),
    sa.Column("athlete_id", sa.Integer, sa.ForeignKey("athletes.id"), nullable=True,
              index=True),
    sa.Column("setup_id", sa.Integer, sa.ForeignKey("setups.id"), nullable=True, index=True),
    sa.Column("course_id", sa.Integer, sa.ForeignKey("courses.id"), nullable=True, index=True),
    sa.Column("inputs", sa.Text, nullable=False),
    sa.Column("strategy", sa.Text, nullable=False),
    sa.Column("weather", sa.Text, nullable=False),
    sa.Column("targets", sa.Text, nullable=False),
    sa.Column("time_saved", sa.Double, nullable=True),
    sa.Column("finish_time", sa.Double, nullable=False),
    sa.Column("library_version", sa.String(50), nullable=False),
    # added by migration 0002
    sa.Column("notes", sa.Text, nullable=False, server_default=""),
    sa.Column("revision", sa.Integer, nullable=False),
    sa.Column("created_at", sa.DateTime, nullable=False),
    sa.Column("updated_at", sa.DateTime, nullable=False),
)

# added by migration 0003: teams of riders for team time trials and team pursuits
teams = sa.Table(
    "teams",
    metadata,
    sa.Column("id", sa.Integer, primary_key=True),
    sa.Column("name", sa.String(200), nullable=False),
    sa.Column("riders", sa.Text, nullable=False),
    sa.Column("drafting", sa.Text, nullable=True),
    sa.Column("counts_rider", sa.Integer, nullable=True),
    sa.Column("revision", sa.Integer, nullable=False),
    sa.Column("created_at", sa.DateTime, nullable=False),
    sa.Column("updated_at", sa.DateTime, nullable=False),
)

# added by migration 0004: reviews of the races ridden to a saved plan (the review's JSON as
# the review command prints it, the ride file's name and SHA-256)
plan_reviews = sa.Table(
    "plan_reviews",
    metadata,
    sa.Column("id", sa.Integer, primary_key=True),
    sa.Column("plan_id", sa.Integer, sa.ForeignKey("plans.id"), nullable=False, index=True),
    sa.Column("ride_name", sa.String(200), nullable=False),
    sa.Column("ride_sha256", sa.String(64), nullable=False),
    sa.Column("review", sa.Text, nullable=False),
    sa.Column("revision", sa.Integer, nullable=False),
    sa.Column("created_at", sa.DateTime, nullable=False),
    sa.Column("updated_at", sa.DateTime, nullable=False),
)

#: Tables in an order that respects foreign keys (parents first).
TABLES = (athletes, setups, courses, plans, teams, plan_reviews)
