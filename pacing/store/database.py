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
    """The default library file: ``library.sqlite3`` in the user's data directory.

    Returns
    -------
    pathlib.Path
        The file's path (platformdirs' user data directory of "pacing"); neither the file nor
        its folder need exist yet.
    """
    return Path(platformdirs.user_data_dir("pacing", appauthor=False)) / DEFAULT_FILE_NAME


def _sqlite_url(path: Path) -> URL:
    """The SQLAlchemy URL of the SQLite file at `path`."""
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
    location : str or os.PathLike or None
        An SQLAlchemy URL (``postgresql+psycopg://user@host/db``,
        ``sqlite:////path/file.sqlite3``) or the path of an SQLite file; None for the
        environment variable, else the default file (whose folder is created here).

    Returns
    -------
    sqlalchemy.engine.URL
        The library's database URL.

    Raises
    ------
    InputError
        An empty location, text that is not a URL, an in-memory SQLite database, a folder, a
        file in a folder that does not exist, or a default folder that cannot be created.
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
    """The URL fit to show a user (password hidden).

    Parameters
    ----------
    url : sqlalchemy.engine.URL or sqlalchemy.engine.Engine
        The database URL, or an engine connected to it.

    Returns
    -------
    str
        The URL as text with the password replaced by ``***``.
    """
    if isinstance(url, Engine):
        url = url.url
    return url.render_as_string(hide_password=True)


def create_library_engine(url: URL) -> Engine:
    """An engine for the library at `url`.

    SQLite: foreign keys enforced, every transaction begins IMMEDIATE (it takes the write lock
    at once, so two writers queue instead of failing half-way) and waits up to
    SQLITE_BUSY_TIMEOUT for another writer. Other backends: connections checked before use.

    Parameters
    ----------
    url : sqlalchemy.engine.URL
        The library's database URL (resolve_database_url).

    Returns
    -------
    sqlalchemy.engine.Engine
        An engine; nothing is connected or migrated yet.
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
    """Alembic's configuration, built in code: the scripts in MIGRATIONS_DIR."""
    config = Config()
    config.set_main_option("script_location", str(MIGRATIONS_DIR))
    return config


def head_revision() -> str:
    """The newest schema revision this version of pacing knows.

    Returns
    -------
    str
        The Alembic revision id of the newest migration in MIGRATIONS_DIR (e.g. ``"0002"``).
    """
    return _head(ScriptDirectory.from_config(_alembic_config()))


def _head(scripts: ScriptDirectory) -> str:
    """The single newest revision of the migration scripts."""
    head = scripts.get_current_head()
    if head is None:  # only if the package lost its migrations
        raise RuntimeError(f"no library migrations found in {MIGRATIONS_DIR}")
    return head


def schema_revision(engine: Engine) -> str | None:
    """The schema revision of the database.

    Parameters
    ----------
    engine : sqlalchemy.engine.Engine
        An engine connected to the library's database.

    Returns
    -------
    str or None
        The Alembic revision the database carries; None for an empty database.
    """
    with engine.connect() as connection:
        heads = MigrationContext.configure(connection).get_current_heads()
    return heads[0] if heads else None


def migrate(engine: Engine, revision: str = "head") -> None:
    """Bring the library schema to `revision` (default: the newest), in one transaction.

    The transaction holds a lock while it migrates (SQLite: BEGIN IMMEDIATE; PostgreSQL: an
    advisory lock), so two programs opening a new library at once do not both create it. A
    database already at the newest revision is left untouched.

    Parameters
    ----------
    engine : sqlalchemy.engine.Engine
        An engine connected to the library's database (create_library_engine).
    revision : str
        The Alembic revision to reach; ``"head"`` for the newest.

    Raises
    ------
    InputError
        The database carries a schema newer than this version of pacing knows.
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
                    f"pacing knows ({_head(scripts)}); update pacing")
        if revision == "head" and tuple(current) == (_head(scripts),):
            return
        config.attributes["connection"] = connection
        command.upgrade(config, revision)


def downgrade(engine: Engine, revision: str) -> None:
    """Take the library schema back to `revision` (for developers and tests; data in the
    columns that go is lost), in one transaction.

    Parameters
    ----------
    engine : sqlalchemy.engine.Engine
        An engine connected to the library's database.
    revision : str
        The Alembic revision to go back to (e.g. ``"0001"``).
    """
    config = _alembic_config()
    with engine.begin() as connection:
        if connection.dialect.name == "postgresql":
            connection.execute(sa.text("SELECT pg_advisory_xact_lock(:key)"),
                               {"key": _MIGRATION_LOCK_KEY})
        config.attributes["connection"] = connection
        command.downgrade(config, revision)


def _known(scripts: ScriptDirectory, revision: str) -> bool:
    """Whether `revision` is one of the migration scripts."""
    try:
        return scripts.get_revision(revision) is not None
    except Exception:  # alembic raises its own error for an unknown revision
        return False


def utc_now() -> datetime.datetime:
    """The current time as the library stores it.

    Returns
    -------
    datetime.datetime
        Now, in UTC without a time zone (naive), microseconds kept.
    """
    return datetime.datetime.now(datetime.UTC).replace(tzinfo=None)


def as_utc(stored: datetime.datetime) -> datetime.datetime:
    """A stored time as a timezone-aware UTC time.

    Parameters
    ----------
    stored : datetime.datetime
        A time as the library stores it (naive, UTC); an aware time is converted to UTC.

    Returns
    -------
    datetime.datetime
        The same instant with ``tzinfo=datetime.UTC``.
    """
    if stored.tzinfo is None:
        return stored.replace(tzinfo=datetime.UTC)
    return stored.astimezone(datetime.UTC)


def open_engine(location: str | os.PathLike | None = None) -> Engine:
    """Connect to the library at `location` and migrate it to the newest schema.

    Parameters
    ----------
    location : str or os.PathLike or None
        An SQLAlchemy URL or the path of an SQLite file; None for PACING_DATABASE_URL, else
        the default file (see resolve_database_url).

    Returns
    -------
    sqlalchemy.engine.Engine
        An engine on the migrated library (dispose of it when done).

    Raises
    ------
    InputError
        A bad location, a missing database driver, an unreachable server or a schema newer
        than this pacing knows, in one line without the password.
    """
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
    """The first line of an error's message, without SQLAlchemy's background links.

    Parameters
    ----------
    error : BaseException
        Any error; for a SQLAlchemy database error, the driver's own error it wraps is read.

    Returns
    -------
    str
        The first line of the message, or the error's class name when it has none.
    """
    original = getattr(error, "orig", None)
    text = str(original if original is not None else error).strip()
    return text.splitlines()[0] if text else type(error).__name__
