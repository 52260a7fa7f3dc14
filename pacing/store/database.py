"""Where the library lives, how to connect to it, and bringing its schema up to date.

Location, first match wins: the location the caller gives (an SQLAlchemy URL, or the path of an
SQLite file), the environment variable PACING_DATABASE_URL (URL or path), or the file
``library.sqlite3`` in the user's data directory (platformdirs), created on first use. A new
SQLite file is private to its user (0600), and so is a new data folder (0700); existing ones
keep their permissions.

The schema is changed only by the Alembic migrations in pacing/store_migrations, run in code
every time a library is opened: a read finds it up to date (the usual case, no lock taken);
otherwise one writing transaction holds a lock (SQLite: BEGIN IMMEDIATE; PostgreSQL: an
advisory lock) while it migrates, so two programs opening a new library at once do not both
create it.

Reads never take the write lock. SQLite runs in WAL mode (write-ahead log, sqlite.org/wal.html):
readers see the last committed state while a writer works, and a writer waits for another
writer at most SQLITE_BUSY_TIMEOUT per try, WRITE_TRIES times, then gives up with LibraryBusy
(one line). Only writing transactions (`writing`) begin IMMEDIATE; reads begin DEFERRED.
"""

from __future__ import annotations

import datetime
import os
import time
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path

import platformdirs
import sqlalchemy as sa
from alembic import command
from alembic.config import Config
from alembic.runtime.migration import MigrationContext
from alembic.script import ScriptDirectory
from sqlalchemy.engine import URL, Connection, Engine, RootTransaction
from sqlalchemy.exc import ArgumentError, OperationalError, SQLAlchemyError

from pacing.errors import InputError

#: Environment variable that names the library database (SQLAlchemy URL or SQLite path).
DATABASE_ENV = "PACING_DATABASE_URL"
#: File name of the default library in the user's data directory.
DEFAULT_FILE_NAME = "library.sqlite3"
#: Folder of the Alembic scripts, inside the package.
MIGRATIONS_DIR = Path(__file__).resolve().parent.parent / "store_migrations"
#: Key of the PostgreSQL advisory lock held while migrating (any fixed 64-bit number).
_MIGRATION_LOCK_KEY = 0x70616369_6E67  # "pacing"
#: How long one try waits for another writer's lock on SQLite [s].
SQLITE_BUSY_TIMEOUT = 5.0
#: How many times a write tries to take the lock before giving up [-].
WRITE_TRIES = 3
#: Execution option that marks a connection's transaction as writing (BEGIN IMMEDIATE).
_WRITE_OPTION = "pacing_write"


class LibraryBusy(InputError):
    """The library stayed locked by another program's write past every try; nothing was
    changed. The message is one line; trying again later is the remedy."""


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
        path.parent.mkdir(mode=0o700, parents=True, exist_ok=True)  # private when new
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

    SQLite: WAL journal mode (readers never wait for a writer), foreign keys enforced, a
    writing transaction (`writing`) begins IMMEDIATE (it takes the write lock at once, so two
    writers queue instead of failing half-way), every other transaction begins DEFERRED (a
    read takes no write lock); a connection waits up to SQLITE_BUSY_TIMEOUT for a lock. Other
    backends: connections checked before use.

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
        busy_ms = int(SQLITE_BUSY_TIMEOUT * 1000)

        @sa.event.listens_for(engine, "connect")
        def _on_connect(dbapi_connection, _record) -> None:  # pragma: no cover - trivial
            # Let SQLAlchemy's "begin" event (below) own the transactions, not the driver.
            dbapi_connection.isolation_level = None
            cursor = dbapi_connection.cursor()
            cursor.execute(f"PRAGMA busy_timeout={busy_ms}")
            cursor.execute("PRAGMA foreign_keys=ON")
            cursor.execute("PRAGMA journal_mode=WAL")  # stays set in the file
            cursor.close()

        @sa.event.listens_for(engine, "begin")
        def _on_begin(connection) -> None:
            writes = connection.get_execution_options().get(_WRITE_OPTION, False)
            connection.exec_driver_sql("BEGIN IMMEDIATE" if writes else "BEGIN")

        return engine
    return sa.create_engine(url, pool_pre_ping=True)


def is_locked(error: BaseException) -> bool:
    """Whether a database error says another program holds the lock (SQLite's
    SQLITE_BUSY / SQLITE_LOCKED: "database is locked", "database table is locked").

    Parameters
    ----------
    error : BaseException
        Any error; a SQLAlchemy error is read through the driver's error it wraps.

    Returns
    -------
    bool
        True for a lock that another writer holds.
    """
    text = first_line(error).lower()
    return isinstance(error, OperationalError) and ("locked" in text or "busy" in text)


def busy_message() -> str:
    """The one-line refusal of a write that found the library locked on every try.

    Returns
    -------
    str
        The message, naming how long it waited [s].
    """
    waited = SQLITE_BUSY_TIMEOUT * WRITE_TRIES
    return (f"the library is busy: another program kept it locked for over {waited:.0f} s; "
            "nothing was changed, try again in a moment")


@contextmanager
def writing(engine: Engine) -> Iterator[Connection]:
    """One writing transaction: committed when the block ends, rolled back on any error.

    On SQLite it begins IMMEDIATE: the write lock is taken before the block runs, waiting up
    to SQLITE_BUSY_TIMEOUT per try and trying WRITE_TRIES times (with a short pause between),
    so a block never fails half-way for want of the lock. Keep the block short: prepare and
    check everything before it.

    Parameters
    ----------
    engine : sqlalchemy.engine.Engine
        The library's engine (create_library_engine).

    Yields
    ------
    sqlalchemy.engine.Connection
        The connection inside the transaction.

    Raises
    ------
    LibraryBusy
        The lock could not be taken on any try (nothing was run).
    """
    connection, transaction = _begin_writing(engine)
    with connection, transaction:
        yield connection


def _begin_writing(engine: Engine) -> tuple[Connection, RootTransaction]:
    """A connection and its begun writing transaction (lock taken), after at most
    WRITE_TRIES tries; LibraryBusy otherwise."""
    for attempt in range(WRITE_TRIES):
        connection = engine.connect().execution_options(**{_WRITE_OPTION: True})
        try:
            return connection, connection.begin()
        except OperationalError as error:
            connection.close()
            if not is_locked(error):
                raise
            time.sleep(0.05 * (attempt + 1))
    raise LibraryBusy(busy_message())


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

    A read first: a database already at the newest revision is left untouched and no lock is
    taken. Otherwise the writing transaction holds a lock while it migrates (SQLite: BEGIN
    IMMEDIATE; PostgreSQL: an advisory lock) and looks again, so two programs opening a new
    library at once do not both create it.

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
    LibraryBusy
        Another program kept the library locked past every try.
    """
    config = _alembic_config()
    scripts = ScriptDirectory.from_config(config)
    with engine.connect() as connection:  # a read: no lock when already up to date
        current = MigrationContext.configure(connection).get_current_heads()
    _refuse_unknown(engine, scripts, current)
    if revision == "head" and tuple(current) == (_head(scripts),):
        return
    with writing(engine) as connection:
        if connection.dialect.name == "postgresql":
            connection.execute(sa.text("SELECT pg_advisory_xact_lock(:key)"),
                               {"key": _MIGRATION_LOCK_KEY})
        current = MigrationContext.configure(connection).get_current_heads()
        _refuse_unknown(engine, scripts, current)
        if revision == "head" and tuple(current) == (_head(scripts),):
            return
        config.attributes["connection"] = connection
        command.upgrade(config, revision)


def _refuse_unknown(engine: Engine, scripts: ScriptDirectory, current: tuple[str, ...]
                    ) -> None:
    """Refuse a database whose schema revision this pacing does not know (a newer one)."""
    for rev in current:
        if not _known(scripts, rev):
            raise InputError(
                f"the library at {shown_url(engine)} has schema {rev}, newer than this "
                f"pacing knows ({_head(scripts)}); update pacing")


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
    with writing(engine) as connection:
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


def _migrate_when_free(engine: Engine, tries: int = 6) -> None:
    """Migrate, trying again when SQLite refused at once with "database is locked".

    Two programs creating a new SQLite library at the same moment can meet a lock that SQLite
    refuses without waiting (the switch of a fresh file to WAL journalling, a read while the
    other's creating transaction commits): the busy timeout does not apply there, so wait a
    little and look again (the second look finds the schema made by the other program).
    """
    for attempt in range(tries):
        try:
            migrate(engine)
            return
        except OperationalError as error:
            if not is_locked(error) or attempt == tries - 1:
                raise
            engine.dispose()  # connections opened during the other's creation: start afresh
            time.sleep(0.05 * (attempt + 1))


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
    create_private_file(url)
    try:
        engine = create_library_engine(url)
    except (ArgumentError, ImportError) as error:
        raise InputError(f"cannot use the database {shown_url(url)}: "
                         f"{str(error).splitlines()[0]}") from None
    try:
        _migrate_when_free(engine)
    except SQLAlchemyError as error:
        engine.dispose()
        raise InputError(f"cannot open the library at {shown_url(url)}: "
                         f"{first_line(error)}") from None
    except InputError:
        engine.dispose()
        raise
    return engine


def create_private_file(url: URL) -> None:
    """Create the SQLite file of `url`, empty and readable by its owner only (0600), if it
    does not exist yet; SQLite makes its write-ahead log and shared-memory files with the
    same permissions. An existing file, and other backends, are left as they are.

    A library holds athletes' body mass and physiology: other users of the machine have no
    business reading it.

    Parameters
    ----------
    url : sqlalchemy.engine.URL
        The library's database URL.

    Raises
    ------
    InputError
        The file cannot be created, in one line.
    """
    if url.get_backend_name() != "sqlite" or not url.database:
        return
    try:
        descriptor = os.open(url.database, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o600)
    except FileExistsError:
        return
    except OSError as error:
        raise InputError(f"cannot create the library file {url.database}: "
                         f"{error.strerror}") from None
    os.close(descriptor)


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
