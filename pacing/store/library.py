"""The coach's library: athletes, their setups, courses, saved plans (with race reviews) and
teams, in one database.

Every write is one short transaction that takes the write lock; reads never take it (SQLite
in WAL mode, pacing.store.database). Every entry has a revision: a change or a delete that names
the revision it was based on is refused with ConflictError when someone changed the entry in
between, instead of silently overwriting. Saving under a name already stored is refused
(pacing.store.statements.NameTaken) unless told to replace that entry or keep both
(``on_existing``). Deleting needs ``confirm=True``; without it the InputError message says what
would go (fit for the app's question to the user).

Example
-------
>>> from pacing.store.library import open_library
>>> with open_library("/tmp/demo-library.sqlite3") as library:     # doctest: +SKIP
...     ann = library.add_athlete(Athlete(name="Ann", body_mass=61.0))
...     library.add_setup(ann.id, Setup(name="TT bike", drag_area=0.23))
"""

from __future__ import annotations

import os

from pacing.store.database import open_engine
from pacing.store.library_athletes import AthleteMethods
from pacing.store.library_courses import CourseMethods
from pacing.store.library_plans import PlanMethods
from pacing.store.library_reviews import ReviewMethods
from pacing.store.library_teams import TeamMethods


class Library(AthleteMethods, CourseMethods, PlanMethods, ReviewMethods, TeamMethods):
    """A coach's library in one database. Open it with `open_library`; close it when done
    (or use it as a context manager). Methods return frozen records, never database objects.

    The engine, transactions and reads by id come from pacing.store.library_base.LibraryBase;
    the methods on athletes and setups from pacing.store.library_athletes, on courses from
    pacing.store.library_courses, on saved plans from pacing.store.library_plans, on the race
    reviews kept with them from pacing.store.library_reviews, on teams from
    pacing.store.library_teams.

    Parameters
    ----------
    engine : sqlalchemy.engine.Engine
        An engine on a migrated library database (pacing.store.database.open_engine); the
        library disposes of it when closed.
    """


def open_library(location: str | os.PathLike | None = None) -> Library:
    """Open (and on first use create) the library.

    The schema is migrated to the newest revision on the way (see pacing.store.database).

    Parameters
    ----------
    location : str or os.PathLike or None
        An SQLAlchemy URL or the path of an SQLite file; None for the environment variable
        PACING_DATABASE_URL, else ``library.sqlite3`` in the user's data directory.

    Returns
    -------
    Library
        The open library (close it, or use it in a ``with`` block).

    Raises
    ------
    InputError
        A location that cannot hold a library, or a database that cannot be reached or
        migrated, in one line.
    """
    return Library(open_engine(location))
