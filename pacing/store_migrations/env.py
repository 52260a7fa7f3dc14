"""Alembic environment of the library database.

pacing.store.database.migrate builds the Alembic Config in code and hands over an open connection,
already inside the transaction that holds the migration lock, in
``config.attributes["connection"]``; this script only runs the migrations on it.
"""

from alembic import context

connection = context.config.attributes.get("connection")
if connection is None:
    raise RuntimeError("run the library migrations through pacing.store.database.migrate(engine)")

context.configure(
    connection=connection,
    target_metadata=None,
    render_as_batch=connection.dialect.name == "sqlite",
)
with context.begin_transaction():
    context.run_migrations()
