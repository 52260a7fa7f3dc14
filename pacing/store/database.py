"""Where the library lives, how to connect to it, and bringing its schema up to date.

Location, first match wins: the location the caller gives (an SQLAlchemy URL, or the path of an
SQLite file), the environment variable PACING_DATABASE_URL (URL or path), or the file
``library.sqlite3`` in the user's data directory (platformdirs), created on first use.

The schema is changed only by the Alembic migrations in pacing/store_migrations, run in code
every time a library is opened (a no-op when it is up to date), inside one transaction that
holds a lock (SQLite: BEGIN IMMEDIATE; PostgreSQL: an advisory lock), so two programs opening
a new library at once do not both create it.
"""

from __future__ import annotations

import datetime
import os
from pathlib import Path

import platformdirs
import sqlalchemy as sa
from alembic import command
from alembic.config import Config
from alembic.runtime.migration import MigrationContext
from alembic.script import ScriptDirectory
from sqlalchemy.engine import URL, Engine
from sqlalchemy.exc import ArgumentError, SQLAlchemyError

from pacing.errors import InputError

#: Environment variable that names the library database (SQLAlchemy URL or SQLite path).
DATABASE_ENV = "PACING_DATABASE_URL"
#: File name of the default library in the user's data directory.
DEFAULT_FILE_NAME = "library.sqlite3"
#: Folder of the Alembic scripts, inside the package.
MIGRATIONS_DIR = Path(__file__).resolve().parent.parent / "store_migrations"
#: Key of the PostgreSQL advisory lock held while migrating (any fixed 64-bit number).
_MIGRATION_LOCK_KEY = 0x70616369_6E67  # "pacing"
#: How long SQLite waits for another writer before giving up [s].
SQLITE_BUSY_TIMEOUT = 30.0


def default_database_path() -> Path:
    """The default library file: ``library.sqlite3`` in the user's data directory."""
    return Path(platformdirs.user_data_dir("pacing", appauthor=False)) / DEFAULT_FILE_NAME


def _sqlite_url(path: Path) -> URL:
    return URL.create("sqlite", database=str(path))


def _url_from_text(location: str, where: str) -> URL:
    """An SQLAlchemy URL from `location`: a URL (with ``://``) or the path of an SQLite file."""
    text = location.strip()
    if not text:
        raise InputError(f"{where} is empty")
    if "://" in text:
        try:
            url = sa.make_url(text)
        except ArgumentError:
            raise InputError(f"{where} is not a database URL: {text!r}") from None
        if url.get_backend_name() == "sqlite" and url.database in (None, "", ":memory:"):
            raise InputError(f"{where}: an in-memory SQLite database cannot hold a library; "
                             "give a file")
        return url
    path = Path(text).expanduser()
    if path.is_dir():
        raise InputError(f"{where} is a folder, not a file: {path}")
    if not path.parent.is_dir():
        raise InputError(f"{where}: folder {path.parent} does not exist")
    return _sqlite_url(path.resolve())


def resolve_database_url(location: str | os.PathLike | None = None) -> URL:
    """The URL of the library: `location`, else PACING_DATABASE_URL, else the default file.

    Parameters
    ----------
    location : an SQLAlchemy URL (``postgresql+psycopg://user@host/db``,
        ``sqlite:////path/file.sqlite3``) or the path of an SQLite file; None for the default.
    """
    if location is not None:
        return _url_from_text(os.fspath(location), "the database location")
    from_env = os.environ.get(DATABASE_ENV)
    if from_env:
        return _url_from_text(from_env, DATABASE_ENV)
    path = default_database_path()
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
    except OSError as error:
        raise InputError(f"cannot create the library folder {path.parent}: "
                         f"{error.strerror}") from None
    return _sqlite_url(path)


def shown_url(url: URL | Engine) -> str:
    """The URL fit to show a user (password hidden)."""
    if isinstance(url, Engine):
        url = url.url
    return url.render_as_string(hide_password=True)


def create_library_engine(url: URL) -> Engine:
    """An engine for the library at `url`.

    SQLite: foreign keys enforced, every transaction begins IMMEDIATE (it takes the write lock
    at once, so two writers queue instead of failing half-way) and waits up to
    SQLITE_BUSY_TIMEOUT for another writer.
    """
    if url.get_backend_name() == "sqlite":
        engine = sa.create_engine(url, connect_args={"timeout": SQLITE_BUSY_TIMEOUT})

        @sa.event.listens_for(engine, "connect")
        def _on_connect(dbapi_connection, _record) -> None:  # pragma: no cover - trivial
            # Let SQLAlchemy's "begin" event (below) own the transactions, not the driver.
            dbapi_connection.isolation_level = None
            cursor = dbapi_connection.cursor()
            cursor.execute("PRAGMA foreign_keys=ON")
            cursor.close()

        @sa.event.listens_for(engine, "begin")
        def _on_begin(connection) -> None:
            connection.exec_driver_sql("BEGIN IMMEDIATE")

        return engine
    return sa.create_engine(url, pool_pre_ping=True)


def _alembic_config() -> Config:
    config = Config()
    config.set_main_option("script_location", str(MIGRATIONS_DIR))
    return config


def head_revision() -> str:
    """The newest schema revision this version of pacing knows."""
    return ScriptDirectory.from_config(_alembic_config()).get_current_head()


def schema_revision(engine: Engine) -> str | None:
    """The schema revision of the database (None for an empty database)."""
    with engine.connect() as connection:
        heads = MigrationContext.configure(connection).get_current_heads()
    return heads[0] if heads else None


def migrate(engine: Engine, revision: str = "head") -> None:
    """Bring the library schema to `revision` (default: the newest), in one transaction.

    Raises InputError when the database carries a schema newer than this version of pacing.
    """
    config = _alembic_config()
    scripts = ScriptDirectory.from_config(config)
    with engine.begin() as connection:
        if connection.dialect.name == "postgresql":
            connection.execute(sa.text("SELECT pg_advisory_xact_lock(:key)"),
                               {"key": _MIGRATION_LOCK_KEY})
        current = MigrationContext.configure(connection).get_current_heads()
        for rev in current:
            if not _known(scripts, rev):
                raise InputError(
                    f"the library at {shown_url(engine)} has schema {rev}, newer than this "
                    f"pacing knows ({scripts.get_current_head()}); update pacing")
        if revision == "head" and tuple(current) == (scripts.get_current_head(),):
            return
        config.attributes["connection"] = connection
        command.upgrade(config, revision)


def downgrade(engine: Engine, revision: str) -> None:
    """Take the library schema back to `revision` (for developers and tests; data in the
    columns that go is lost)."""
    config = _alembic_config()
    with engine.begin() as connection:
        if connection.dialect.name == "postgresql":
            connection.execute(sa.text("SELECT pg_advisory_xact_lock(:key)"),
                               {"key": _MIGRATION_LOCK_KEY})
        config.attributes["connection"] = connection
        command.downgrade(config, revision)


def _known(scripts: ScriptDirectory, revision: str) -> bool:
    try:
        return scripts.get_revision(revision) is not None
    except Exception:  # alembic raises its own error for an unknown revision
        return False


def utc_now() -> datetime.datetime:
    """The current time, naive UTC, as stored (microseconds kept)."""
    return datetime.datetime.now(datetime.UTC).replace(tzinfo=None)


def as_utc(stored: datetime.datetime) -> datetime.datetime:
    """A stored (naive UTC) time as a timezone-aware UTC time."""
    if stored.tzinfo is None:
        return stored.replace(tzinfo=datetime.UTC)
    return stored.astimezone(datetime.UTC)


def open_engine(location: str | os.PathLike | None = None) -> Engine:
    """Connect to the library at `location` (see resolve_database_url) and migrate it."""
    url = resolve_database_url(location)
    try:
        engine = create_library_engine(url)
    except (ArgumentError, ImportError) as error:
        raise InputError(f"cannot use the database {shown_url(url)}: "
                         f"{str(error).splitlines()[0]}") from None
    try:
        migrate(engine)
    except SQLAlchemyError as error:
        engine.dispose()
        raise InputError(f"cannot open the library at {shown_url(url)}: "
                         f"{first_line(error)}") from None
    except InputError:
        engine.dispose()
        raise
    return engine


def first_line(error: BaseException) -> str:
    """The first line of a database error, without SQLAlchemy's background links."""
    original = getattr(error, "orig", None)
    text = str(original if original is not None else error).strip()
    return text.splitlines()[0] if text else type(error).__name__
