"""Setups keep where their drag area came from (its 95 % interval and source, all empty for
setups stored before); saved plans keep the reviews of the races ridden to them.

Revision ID: 0004
Revises: 0003
"""

import sqlalchemy as sa
from alembic import op

revision = "0004"
down_revision = "0003"
branch_labels = None
depends_on = None


ORIGIN_COLUMNS = ("drag_area_low", "drag_area_high", "drag_area_source")


def upgrade() -> None:
    # plain ALTER TABLE … ADD COLUMN on every backend: a batch copy of setups would drop the
    # table the saved plans point at, which SQLite's foreign keys refuse
    op.add_column("setups", sa.Column("drag_area_low", sa.Double, nullable=True))
    op.add_column("setups", sa.Column("drag_area_high", sa.Double, nullable=True))
    op.add_column("setups", sa.Column("drag_area_source", sa.Text, nullable=True))
    op.create_table(
        "plan_reviews",
        sa.Column("id", sa.Integer, primary_key=True),
        sa.Column("plan_id", sa.Integer, sa.ForeignKey("plans.id"), nullable=False,
                  index=True),
        sa.Column("ride_name", sa.String(200), nullable=False),
        sa.Column("ride_sha256", sa.String(64), nullable=False),
        sa.Column("review", sa.Text, nullable=False),
        sa.Column("revision", sa.Integer, nullable=False),
        sa.Column("created_at", sa.DateTime, nullable=False),
        sa.Column("updated_at", sa.DateTime, nullable=False),
    )


def downgrade() -> None:
    op.drop_table("plan_reviews")
    for column in reversed(ORIGIN_COLUMNS):
        if op.get_bind().dialect.name == "sqlite":
            # SQLite 3.35+ drops a column in place (no copy of the table plans point at)
            op.execute(f"ALTER TABLE setups DROP COLUMN {column}")
        else:
            op.drop_column("setups", column)
