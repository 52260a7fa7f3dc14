"""Initial library: athletes, their setups, courses (original GPX) and saved plans.

Revision ID: 0001
Revises:
"""

import sqlalchemy as sa
from alembic import op

revision = "0001"
down_revision = None
branch_labels = None
depends_on = None


def _stamps() -> list[sa.Column]:
    return [
        sa.Column("revision", sa.Integer, nullable=False),
        sa.Column("created_at", sa.DateTime, nullable=False),
        sa.Column("updated_at", sa.DateTime, nullable=False),
    ]


def upgrade() -> None:
    op.create_table(
        "athletes",
        sa.Column("id", sa.Integer, primary_key=True),
        sa.Column("name", sa.String(200), nullable=False),
        sa.Column("body_mass", sa.Double, nullable=False),
        sa.Column("critical_power", sa.Double, nullable=True),
        sa.Column("w_prime", sa.Double, nullable=True),
        sa.Column("height", sa.Double, nullable=True),
        sa.Column("flat_pace", sa.Double, nullable=True),
        sa.Column("critical_speed", sa.Double, nullable=True),
        sa.Column("d_prime", sa.Double, nullable=True),
        *_stamps(),
    )
    op.create_table(
        "setups",
        sa.Column("id", sa.Integer, primary_key=True),
        sa.Column("athlete_id", sa.Integer, sa.ForeignKey("athletes.id"), nullable=False),
        sa.Column("name", sa.String(200), nullable=False),
        sa.Column("bike_mass", sa.Double, nullable=False),
        sa.Column("drag_area", sa.Double, nullable=False),
        sa.Column("power_share", sa.Double, nullable=False),
        sa.Column("rolling_coefficient", sa.Double, nullable=False),
        sa.Column("drivetrain_efficiency", sa.Double, nullable=False),
        sa.Column("yaw_drag_table", sa.Text, nullable=True),
        *_stamps(),
    )
    op.create_index("ix_setups_athlete_id", "setups", ["athlete_id"])
    op.create_table(
        "courses",
        sa.Column("id", sa.Integer, primary_key=True),
        sa.Column("name", sa.String(200), nullable=False),
        sa.Column("gpx", sa.LargeBinary, nullable=False),
        sa.Column("gpx_sha256", sa.String(64), nullable=False),
        sa.Column("gpx_size", sa.Integer, nullable=False),
        sa.Column("distance_m", sa.Double, nullable=False),
        sa.Column("ascent_m", sa.Double, nullable=False),
        *_stamps(),
    )
    op.create_table(
        "plans",
        sa.Column("id", sa.Integer, primary_key=True),
        sa.Column("name", sa.String(200), nullable=False),
        sa.Column("athlete_id", sa.Integer, sa.ForeignKey("athletes.id"), nullable=True),
        sa.Column("setup_id", sa.Integer, sa.ForeignKey("setups.id"), nullable=True),
        sa.Column("course_id", sa.Integer, sa.ForeignKey("courses.id"), nullable=True),
        sa.Column("inputs", sa.Text, nullable=False),
        sa.Column("strategy", sa.Text, nullable=False),
        sa.Column("weather", sa.Text, nullable=False),
        sa.Column("targets", sa.Text, nullable=False),
        sa.Column("time_saved", sa.Double, nullable=True),
        sa.Column("finish_time", sa.Double, nullable=False),
        sa.Column("library_version", sa.String(50), nullable=False),
        *_stamps(),
    )
    op.create_index("ix_plans_athlete_id", "plans", ["athlete_id"])
    op.create_index("ix_plans_setup_id", "plans", ["setup_id"])
    op.create_index("ix_plans_course_id", "plans", ["course_id"])


def downgrade() -> None:
    op.drop_table("plans")
    op.drop_table("courses")
    op.drop_table("setups")
    op.drop_table("athletes")
