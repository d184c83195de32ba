"""The book file: opening, schema and migrations, and the saved versions of named recipes.

See :mod:`selector.book` for what the file holds and how it stays safe under use.
"""

from __future__ import annotations

import contextlib
import dataclasses
import difflib
import functools
import json
import os
import sqlite3
from dataclasses import dataclass
from datetime import datetime, timezone
from pathlib import Path
from typing import Any, Iterator, Mapping

from catalog import Catalog, load_catalog
from selector.book.content import catalog_fingerprint, composition_of, figures_of
from selector.errors import BookError
from selector.textsafe import echo

#: ``PRAGMA application_id`` of a poise book (the bytes of ``"pois"``).
APPLICATION_ID = 0x706F6973
#: The schema this poise writes; a book with a higher ``schema_version`` is refused.
SCHEMA_VERSION = 2
#: Environment variable naming the book file.
BOOK_ENV_VAR = "POISE_BOOK"
#: File name of the default book inside the user's data folder.
BOOK_FILE_NAME = "book.sqlite3"
#: How long a writer waits for another writer to finish [ms] (common practice: long enough
#: for any save, short enough that a stuck process is reported).
BUSY_TIMEOUT_MS = 30_000
#: Longest recipe name and note [characters].
NAME_MAX_CHARS = 100
NOTE_MAX_CHARS = 2000
#: The ``format`` key of an exported entry (the JSON ``poise book import`` reads).
ENTRY_FORMAT = "poise-book-entry"
ENTRY_FORMAT_VERSION = 1

#: Schema migrations, applied in order: (version, what it does, SQL statements).
MIGRATIONS: tuple[tuple[int, str, tuple[str, ...]], ...] = (
    (1, "recipes and their versions", (
        "CREATE TABLE schema_version (version INTEGER PRIMARY KEY, applied_at TEXT NOT NULL, what TEXT NOT NULL)",
        "CREATE TABLE recipes (recipe_id INTEGER PRIMARY KEY, name TEXT NOT NULL UNIQUE, "
        "created_at TEXT NOT NULL)",
        "CREATE TABLE versions (recipe_id INTEGER NOT NULL REFERENCES recipes(recipe_id) ON DELETE CASCADE, "
        "version INTEGER NOT NULL, created_at TEXT NOT NULL, recipe_json TEXT NOT NULL, spec_json TEXT NOT NULL, "
        "catalog_fingerprint TEXT NOT NULL, poise_version TEXT NOT NULL, figures_json TEXT NOT NULL, "
        "target_ph REAL, verified_ph_at_use REAL, note TEXT NOT NULL DEFAULT '', "
        "PRIMARY KEY (recipe_id, version))",
    )),
    (2, "verification log", (
        "CREATE TABLE verifications (recipe_id INTEGER NOT NULL, version INTEGER NOT NULL, "
        "verified_at TEXT NOT NULL, catalog_fingerprint TEXT NOT NULL, verified_ph_at_use REAL, "
        "drift_ph REAL, within_tolerance INTEGER NOT NULL, "
        "FOREIGN KEY (recipe_id, version) REFERENCES versions(recipe_id, version) ON DELETE CASCADE)",
    )),
)


def default_book_path() -> Path:
    """The book file: ``$POISE_BOOK`` if set, else ``book.sqlite3`` in the user's data folder."""
    given = os.environ.get(BOOK_ENV_VAR, "").strip()
    if given:
        return Path(given).expanduser()
    import platformdirs

    return Path(platformdirs.user_data_dir("poise", appauthor=False)) / BOOK_FILE_NAME


def book_path(path: str | os.PathLike | None = None) -> Path:
    """``path`` (``--book``) when given, else :func:`default_book_path`."""
    return Path(path).expanduser() if path else default_book_path()


def book_exists(path: str | os.PathLike | None = None) -> bool:
    """Whether a book file exists at ``path`` (default :func:`default_book_path`); BookError for a path that cannot be."""
    where = book_path(path)
    with sqlite_errors(where):
        if "\x00" in str(where):
            raise OSError(0, "a path cannot hold a NUL character")
        return where.is_file()


@dataclass
class Book:
    """An open recipe book (a connection to its file); use as a context manager to close it."""

    path: Path
    connection: sqlite3.Connection

    def close(self) -> None:
        self.connection.close()

    def __enter__(self) -> "Book":
        return self

    def __exit__(self, *exc_info: Any) -> None:
        self.close()

    @contextlib.contextmanager
    def errors(self) -> Iterator[None]:
        """Turn an SQLite failure into a one-line :class:`BookError` naming the file."""
        with sqlite_errors(self.path):
            yield

    @contextlib.contextmanager
    def writing(self) -> Iterator[sqlite3.Connection]:
        """One write transaction (``BEGIN IMMEDIATE`` … ``COMMIT``, rolled back on any error)."""
        con = self.connection
        with self.errors():
            con.execute("BEGIN IMMEDIATE")
            try:
                yield con
                con.execute("COMMIT")
            except BaseException:
                if con.in_transaction:     # SQLite may have rolled back already (a full disk)
                    con.execute("ROLLBACK")
                raise


@contextlib.contextmanager
def sqlite_errors(path: Path) -> Iterator[None]:
    """SQLite errors on ``path`` as one-line :class:`BookError`."""
    try:
        yield
    except sqlite3.DatabaseError as error:
        text = str(error)
        if "not a database" in text or "malformed" in text:
            raise BookError(f"{echo(str(path))} is not a poise recipe book or is damaged ({text}); "
                            f"give another file with --book PATH or {BOOK_ENV_VAR}") from None
        raise BookError(f"the recipe book {echo(str(path))} cannot be used: {text}") from None
    except sqlite3.Error as error:
        raise BookError(f"the recipe book {echo(str(path))} cannot be used: {error}") from None
    except OSError as error:
        raise BookError(f"the recipe book {echo(str(path))} cannot be opened: {error.strerror or error}") from None


def open_book(path: str | os.PathLike | None = None, create: bool = True) -> Book:
    """Open (and with ``create`` make, or migrate) the recipe book at ``path``.

    Parameters
    ----------
    path : path, optional
        The book file (default :func:`default_book_path`).  The default's folder is made
        when missing; an explicit path's folder must exist.
    create : bool
        Make the file when it does not exist (True) or raise :class:`BookError` (False).

    Raises
    ------
    BookError
        if the file is not a poise book (not SQLite, or SQLite holding other tables), was
        written by a newer poise (schema above :data:`SCHEMA_VERSION`), or cannot be opened.
    """
    explicit = path is not None and str(path) != ""
    where = book_path(path)
    if not book_exists(where):
        if where.is_dir():
            raise BookError(f"{echo(str(where))} is a folder; give the path of a book file")
        if not create:
            raise BookError(f"no recipe book at {echo(str(where))}; save a recipe with --save NAME first")
        if not where.parent.exists():
            if explicit:
                raise BookError(f"the folder of {echo(str(where))} does not exist; give a path in an existing folder")
            with sqlite_errors(where):
                where.parent.mkdir(parents=True, exist_ok=True)
    with sqlite_errors(where):
        con = sqlite3.connect(where, timeout=BUSY_TIMEOUT_MS / 1000, isolation_level=None)
    book = Book(where, con)
    try:
        with book.errors():
            con.execute(f"PRAGMA busy_timeout = {BUSY_TIMEOUT_MS}")
            _check_and_migrate(book)
            con.execute("PRAGMA foreign_keys = ON")
    except BaseException:
        con.close()
        raise
    return book


def _check_and_migrate(book: Book) -> None:
    """Refuse a file that is not a book or is newer; make or migrate the schema."""
    con = book.connection
    application_id = con.execute("PRAGMA application_id").fetchone()[0]
    tables = {row[0] for row in con.execute("SELECT name FROM sqlite_master WHERE type = 'table'")}
    if application_id != APPLICATION_ID and (tables or application_id):
        raise BookError(f"{echo(str(book.path))} is an SQLite file but not a poise recipe book; "
                        f"give another file with --book PATH or {BOOK_ENV_VAR}")
    if application_id == APPLICATION_ID and "schema_version" not in tables:
        raise BookError(f"{echo(str(book.path))} is a damaged poise recipe book (no schema_version table)")
    if con.execute("PRAGMA journal_mode").fetchone()[0] != "wal":
        con.execute("PRAGMA journal_mode = WAL")
    if _schema_version(con) == SCHEMA_VERSION:
        return                                   # up to date: opening writes nothing
    with book.writing():
        version = _schema_version(con)           # again, under the write lock
        if version > SCHEMA_VERSION:
            raise BookError(f"{echo(str(book.path))} was written by a newer poise (book schema {version}; "
                            f"this poise reads up to {SCHEMA_VERSION}): upgrade poise to use it")
        migrate(con, version, SCHEMA_VERSION)


def _schema_version(con: sqlite3.Connection) -> int:
    """The highest migration applied to the book (0 for a new, empty file)."""
    has_table = con.execute("SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = 'schema_version'").fetchone()
    if not has_table:
        return 0
    return int(con.execute("SELECT COALESCE(MAX(version), 0) FROM schema_version").fetchone()[0])


def migrate(con: sqlite3.Connection, from_version: int, to_version: int) -> None:
    """Apply the :data:`MIGRATIONS` above ``from_version`` up to ``to_version``, inside the caller's transaction."""
    for version, what, statements in MIGRATIONS:
        if from_version < version <= to_version:
            for statement in statements:
                con.execute(statement)
            con.execute("INSERT INTO schema_version (version, applied_at, what) VALUES (?, ?, ?)",
                        (version, utc_now(), what))
    if from_version == 0:
        con.execute(f"PRAGMA application_id = {APPLICATION_ID}")


def utc_now() -> str:
    """The time now in UTC, ISO 8601 to the second (``2026-12-02T19:40:00+00:00``)."""
    return datetime.now(timezone.utc).isoformat(timespec="seconds")


@dataclass(frozen=True)
class BookEntry:
    """One saved version of a named recipe, as stored."""

    name: str
    version: int
    created_at: str
    recipe: dict
    spec: dict
    catalog_fingerprint: str
    poise_version: str
    figures: dict
    note: str = ""

    def recipe_json(self) -> dict:
        """The recipe's JSON as saved, with ``target_ph`` (from the figures when it lacked one)."""
        out = dict(self.recipe)
        if "target_ph" not in out and "target_ph" in self.figures:
            out["target_ph"] = self.figures["target_ph"]
        return out

    def document(self) -> dict:
        """The entry as the JSON ``export --format json`` writes and ``import`` reads."""
        return {"format": ENTRY_FORMAT, "format_version": ENTRY_FORMAT_VERSION, "name": self.name,
                "version": self.version, "created_at": self.created_at, "note": self.note,
                "catalog_fingerprint": self.catalog_fingerprint, "poise_version": self.poise_version,
                "figures": self.figures, "spec": self.spec, "recipe": self.recipe_json()}


@dataclass(frozen=True)
class RecipeSummary:
    """A named recipe in :func:`list_recipes`: its latest version and how many there are."""

    name: str
    versions: int
    latest_version: int
    latest_created_at: str
    target_ph: float | None
    verified_ph_at_use: float | None
    note: str

    def as_json(self) -> dict:
        return dataclasses.asdict(self)


@functools.lru_cache(maxsize=1)
def _poise_version() -> str:
    from importlib import metadata

    try:
        return metadata.version("poise")
    except metadata.PackageNotFoundError:
        return "unknown"


def check_name(name: Any) -> str:
    """A recipe name: printable text of 1 to :data:`NAME_MAX_CHARS` characters, spaces trimmed."""
    if not isinstance(name, str) or not name.strip():
        raise BookError("a recipe name must be non-empty text (e.g. --save tris-7.4)")
    name = name.strip()
    if len(name) > NAME_MAX_CHARS or not name.isprintable():
        raise BookError(f"recipe name {echo(name)}: expected printable text of at most {NAME_MAX_CHARS} characters")
    return name


def _json_text(value: Any, what: str) -> str:
    try:
        return json.dumps(value, sort_keys=False, allow_nan=False)
    except (TypeError, ValueError) as error:
        raise BookError(f"the {what} cannot be stored as JSON: {error}") from None


def save_recipe(book: Book, name: str, recipe_json: Mapping[str, Any], spec: Any = None,
                catalog: Catalog | None = None, note: str = "") -> BookEntry:
    """Save a recipe under ``name``: a new name starts at version 1, an existing one gets the next version.

    Parameters
    ----------
    book : Book
    name : str
        The recipe's name (:func:`check_name`).
    recipe_json : mapping
        The recipe's JSON, stored whole (``Recipe.as_json()``, or an optimised mix's JSON).
    spec : BufferSpec or mapping, optional
        The spec it was made for (stored as ``spec.as_dict()``).
    catalog : Catalog, optional
        The catalog it was computed with (its fingerprint is stored; default: shipped).
    note : str
        Free text kept with the version.

    Returns
    -------
    BookEntry
        The version written.  One transaction: on any failure nothing of it is kept.
    """
    fingerprint = catalog_fingerprint(catalog if catalog is not None else load_catalog())
    return write_version(book, name, recipe_json, spec, fingerprint, note)


def write_version(book: Book, name: str, recipe_json: Mapping[str, Any], spec: Any, fingerprint: str,
                   note: str) -> BookEntry:
    """Check and write one version in one transaction (the next number is read under the write lock)."""
    name = check_name(name)
    if not isinstance(recipe_json, Mapping) or not composition_of(recipe_json):
        raise BookError("only a recipe with a composition can be saved (the JSON of a recipe or an optimised mix)")
    if len(note) > NOTE_MAX_CHARS:
        raise BookError(f"the note has {len(note)} characters; at most {NOTE_MAX_CHARS} are kept")
    spec_dict = dict(spec.as_dict() if hasattr(spec, "as_dict") else (spec or {}))
    recipe = dict(recipe_json)
    figures = figures_of(recipe, spec_dict)
    recipe_text, spec_text = _json_text(recipe, "recipe"), _json_text(spec_dict, "spec")
    figures_text, now, poise_version = _json_text(figures, "figures"), utc_now(), _poise_version()
    with book.writing() as con:
        row = con.execute("SELECT recipe_id FROM recipes WHERE name = ?", (name,)).fetchone()
        recipe_id = row[0] if row else con.execute(
            "INSERT INTO recipes (name, created_at) VALUES (?, ?)", (name, now)).lastrowid
        version = con.execute("SELECT COALESCE(MAX(version), 0) + 1 FROM versions WHERE recipe_id = ?",
                              (recipe_id,)).fetchone()[0]
        con.execute("INSERT INTO versions (recipe_id, version, created_at, recipe_json, spec_json, "
                    "catalog_fingerprint, poise_version, figures_json, target_ph, verified_ph_at_use, note) "
                    "VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)",
                    (recipe_id, version, now, recipe_text, spec_text, fingerprint, poise_version, figures_text,
                     figures.get("target_ph"), figures.get("verified_ph_at_use"), note))
    return BookEntry(name, int(version), now, recipe, spec_dict, fingerprint, poise_version, figures, note)


def list_recipes(book: Book) -> list[RecipeSummary]:
    """Every named recipe with its latest version, by name."""
    with book.errors():
        rows = book.connection.execute(
            "SELECT r.name, COUNT(*), MAX(v.version) FROM recipes r JOIN versions v USING (recipe_id) "
            "GROUP BY r.recipe_id ORDER BY r.name").fetchall()
        out = []
        for name, count, latest in rows:
            created, target, verified, note = book.connection.execute(
                "SELECT v.created_at, v.target_ph, v.verified_ph_at_use, v.note FROM versions v "
                "JOIN recipes r USING (recipe_id) WHERE r.name = ? AND v.version = ?", (name, latest)).fetchone()
            out.append(RecipeSummary(name, int(count), int(latest), created, target, verified, note))
    return out


def _unknown_name(book: Book, name: str) -> BookError:
    names = [row[0] for row in book.connection.execute("SELECT name FROM recipes ORDER BY name")]
    close = difflib.get_close_matches(name, names, n=3)
    hint = f"; did you mean {', '.join(close)}?" if close else ""
    listed = "the book is empty" if not names else "'poise book list' lists them"
    return BookError(f"no recipe named {echo(name)} in the book{hint} ({listed})")


def _versions_of(book: Book, name: str) -> list[int]:
    rows = book.connection.execute("SELECT v.version FROM versions v JOIN recipes r USING (recipe_id) "
                                   "WHERE r.name = ? ORDER BY v.version", (name,)).fetchall()
    return [int(r[0]) for r in rows]


def show_recipe(book: Book, name: str, version: int | None = None) -> BookEntry:
    """The saved ``version`` of ``name`` (default: the latest).

    Raises
    ------
    BookError
        for an unknown name (with close names) or a version that does not exist (with those that do).
    """
    with book.errors():
        versions = _versions_of(book, name)
        if not versions:
            raise _unknown_name(book, name)
        chosen = versions[-1] if version is None else version
        if chosen not in versions:
            raise BookError(f"{echo(name)} has no version {version}; it has versions "
                            f"{', '.join(str(v) for v in versions)}")
        row = book.connection.execute(
            "SELECT v.created_at, v.recipe_json, v.spec_json, v.catalog_fingerprint, v.poise_version, "
            "v.figures_json, v.note FROM versions v JOIN recipes r USING (recipe_id) "
            "WHERE r.name = ? AND v.version = ?", (name, chosen)).fetchone()
    created, recipe_text, spec_text, fingerprint, poise_version, figures_text, note = row
    try:
        recipe, spec, figures = json.loads(recipe_text), json.loads(spec_text), json.loads(figures_text)
    except ValueError:
        raise BookError(f"version {chosen} of {echo(name)} in {echo(str(book.path))} is damaged "
                        "(its JSON cannot be read)") from None
    return BookEntry(name, chosen, created, recipe, spec, fingerprint, poise_version, figures, note)


def versions_of(book: Book, name: str) -> list[BookEntry]:
    """Every saved version of ``name``, oldest first."""
    with book.errors():
        versions = _versions_of(book, name)
        if not versions:
            raise _unknown_name(book, name)
    return [show_recipe(book, name, v) for v in versions]


def remove_recipe(book: Book, name: str) -> int:
    """Remove ``name`` and all its versions (one transaction); return how many versions went."""
    with book.writing() as con:
        row = con.execute("SELECT recipe_id FROM recipes WHERE name = ?", (name,)).fetchone()
        if row is None:
            raise _unknown_name(book, name)
        count = con.execute("SELECT COUNT(*) FROM versions WHERE recipe_id = ?", (row[0],)).fetchone()[0]
        con.execute("DELETE FROM recipes WHERE recipe_id = ?", (row[0],))
    return int(count)
