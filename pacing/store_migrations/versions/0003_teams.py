"""Teams of riders for team time trials and team pursuits (riders as JSON text, the team's
drafting by position and counting rider, both optional).

Revision ID: 0003
Revises: 0002
"""

import sqlalchemy as sa
from alembic import op

revision = "0003"
down_revision = "0002"
branch_labels = None
depends_on = None


def upgrade() -> None:
    op.create_table(
        "teams",
        sa.Column("id", sa.Integer, primary_key=True),
        sa.Column("name", sa.String(200), nullable=False),
        sa.Column("riders", sa.Text, nullable=False),
        sa.Column("drafting", sa.Text, nullable=True),
        sa.Column("counts_rider", sa.Integer, nullable=True),
        sa.Column("revision", sa.Integer, nullable=False),
        sa.Column("created_at", sa.DateTime, nullable=False),
        sa.Column("updated_at", sa.DateTime, nullable=False),
    )


def downgrade() -> None:
    op.drop_table("teams")
