"""Saved plans get the coach's notes (free text, empty for plans saved before).

Revision ID: 0002
Revises: 0001
"""

import sqlalchemy as sa
from alembic import op

revision = "0002"
down_revision = "0001"
branch_labels = None
depends_on = None


def upgrade() -> None:
    with op.batch_alter_table("plans") as batch:
        batch.add_column(sa.Column("notes", sa.Text, nullable=False, server_default=""))


def downgrade() -> None:
    with op.batch_alter_table("plans") as batch:
        batch.drop_column("notes")
