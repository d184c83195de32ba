"""The recipe book: saved recipes in an embedded SQLite file, versioned, diffable, re-verifiable.

A lab makes the same buffer for months and changes it; the book keeps every version of a
named recipe with the spec it was made for, the catalog it was computed with (its
fingerprint, :func:`catalog_fingerprint`) and its verified figures, so a notebook can say
which version it used and :func:`verify_recipe` can re-solve it with today's catalog.

The file
    One SQLite file, by default ``book.sqlite3`` in the user's data folder
    (:func:`default_book_path`, through ``platformdirs``); the ``POISE_BOOK`` environment
    variable or an explicit path points elsewhere.  No server: the file is the book.
    ``PRAGMA application_id`` marks it as a poise book; the table ``schema_version`` holds
    one row per migration applied (:data:`MIGRATIONS`, applied in order when an older book
    is opened; a book from a newer poise is refused with a one-line :class:`BookError`).
Safe under use
    Every write is one transaction begun with ``BEGIN IMMEDIATE`` (the write lock is taken
    before the next version number is read, so two writers at once never give out the same
    number and never lose a version), the journal is WAL (readers do not block the writer)
    and a busy writer is waited for up to :data:`BUSY_TIMEOUT_MS`.  A crash or a failed
    write inside the transaction leaves the book as it was before the save.
What is stored
    The whole recipe JSON given (``Recipe.as_json()`` of a recipe, or the JSON of an
    optimised mix: keys added later are kept), the spec as a JSON object, the catalog
    fingerprint, the figures read from the recipe (:func:`figures_of`: ``target_ph``,
    ``verified_ph_at_use``, ``meter_ph_at_prep`` …), the time in UTC (ISO 8601) and a note.

Every problem a user can cause (unknown name or version, a file that is not a book, a
locked or unwritable file, a bad import file) raises :class:`BookError`, one line.
"""

from __future__ import annotations

import contextlib
import dataclasses
import difflib
import functools
import hashlib
import html
import json
import math
import os
import sqlite3
from dataclasses import dataclass
from datetime import datetime, timezone
from pathlib import Path
from typing import Any, Iterator, Mapping

import numpy as np

from catalog import Catalog, load_catalog
from selector.errors import InputError
from selector.safety import SAFETY_NOTICE, hazard_cautions
from selector.textsafe import echo, write_csv

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
#: Largest file ``import_recipe`` reads [bytes] (the app's upload limit).
IMPORT_MAX_BYTES = 5 * 1024 * 1024
#: The ``format`` key of an exported entry (the JSON ``poise book import`` reads).
ENTRY_FORMAT = "poise-book-entry"
ENTRY_FORMAT_VERSION = 1
#: The export formats of :func:`export_recipe`.
EXPORT_FORMATS = ("md", "html", "csv", "json")
#: Largest drift of a re-solved pH from the saved one still reported as unchanged [pH]
#: (the tolerance recipes are verified to, :data:`selector.recipe.VERIFY_TOLERANCE_PH`).
VERIFY_DRIFT_TOLERANCE_PH = 0.005
#: Two figures closer than this (relative) are the same in a diff.
DIFF_RELATIVE_TOLERANCE = 1e-9

#: The figures read from a recipe's JSON (:func:`figures_of`), in the order shown.
FIGURE_KEYS = ("target_ph", "temperature_c", "prep_temperature_c", "verified_ph_at_use", "meter_ph_at_prep",
               "ionic_strength_mol_l", "capacity_mol_l_per_ph", "osmolarity_osmol_l", "volume_l", "cost")

#: The figures that are pH values (shown to 4 decimals).
PH_KEYS = ("target_ph", "verified_ph_at_use", "meter_ph_at_prep")

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


class BookError(InputError):
    """A recipe book problem the user can fix: unknown name, not a book, newer schema, locked file."""


# ---------------------------------------------------------------------------------------
# The file


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


# ---------------------------------------------------------------------------------------
# What is stored


#: The fingerprints computed in this process, by catalog identity (the records are frozen).
_FINGERPRINTS: dict[int, tuple[Catalog, str]] = {}


def catalog_fingerprint(catalog: Catalog) -> str:
    """A short hash of every record of ``catalog`` (16 hex digits of SHA-256).

    Two catalogs with the same rows and numbers give the same fingerprint, whatever the
    process; any edited number, added or removed row changes it.  The records are frozen
    dataclasses in file order, so their ``repr`` is a canonical text of the catalog.  Computed
    once per catalog object (about 35 ms for the shipped one).
    """
    cached = _FINGERPRINTS.get(id(catalog))
    if cached is not None and cached[0] is catalog:
        return cached[1]
    text = repr((catalog.sources, catalog.systems, catalog.ions, catalog.reagents, catalog.metal_binding,
                 catalog.uv_cutoffs, catalog.flags, catalog.ph_standards, catalog.polymerisation))
    fingerprint = hashlib.sha256(text.encode("utf-8")).hexdigest()[:16]
    if len(_FINGERPRINTS) >= 8:
        _FINGERPRINTS.clear()
    _FINGERPRINTS[id(catalog)] = (catalog, fingerprint)
    return fingerprint


def _recipe_part(recipe_json: Mapping[str, Any]) -> Mapping[str, Any]:
    """The bench recipe inside a JSON: its ``recipe`` object when it has one (an optimised mix), else itself."""
    inner = recipe_json.get("recipe")
    return inner if isinstance(inner, Mapping) else recipe_json


def _number(value: Any) -> float | None:
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        return None
    return float(value)


def composition_of(recipe_json: Mapping[str, Any]) -> dict[str, float]:
    """Reagent id -> amount in the final solution [mol/L] of a stored recipe.

    Read from ``composition_mol_l``, else from ``reagents`` as a list of objects with
    ``id`` and ``conc_mol_l`` (a bench recipe) or as an object id -> mol/L (an optimised mix);
    the ``recipe`` object inside the JSON first when there is one.
    """
    for part in (_recipe_part(recipe_json), recipe_json):
        given = part.get("composition_mol_l")
        if isinstance(given, Mapping):
            return {str(k): float(v) for k, v in given.items() if _number(v) is not None}
        reagents = part.get("reagents")
        if isinstance(reagents, Mapping):
            return {str(k): float(v) for k, v in reagents.items() if _number(v) is not None}
        if isinstance(reagents, list):
            return {str(r["id"]): float(r["conc_mol_l"]) for r in reagents
                    if isinstance(r, Mapping) and "id" in r and _number(r.get("conc_mol_l")) is not None}
    return {}


def figures_of(recipe_json: Mapping[str, Any], spec: Mapping[str, Any]) -> dict[str, float]:
    """The verified figures of a recipe JSON, :data:`FIGURE_KEYS` that it has (numbers only).

    A key is looked up in the recipe (its ``recipe`` object first), then in its ``verified``
    object (an optimised mix: ``ph`` is the verified pH at use), then in the spec
    (``target_ph`` is the spec's ``ph``; temperatures and volume).
    """
    part = _recipe_part(recipe_json)
    given = recipe_json.get("verified")
    verified: Mapping[str, Any] = given if isinstance(given, Mapping) else {}
    from_spec = {"target_ph": spec.get("ph"), "temperature_c": spec.get("temperature_c"),
                 "prep_temperature_c": spec.get("prep_temperature_c"), "volume_l": spec.get("volume_l")}
    out: dict[str, float] = {}
    for key in FIGURE_KEYS:
        candidates = (part.get(key), recipe_json.get(key), verified.get(key),
                      verified.get("ph") if key == "verified_ph_at_use" else None,
                      recipe_json.get("cost_for_volume") if key == "cost" else None, from_spec.get(key))
        for value in candidates:
            number = _number(value)
            if number is not None:
                out[key] = number
                break
    return out


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
    return _write_version(book, name, recipe_json, spec, fingerprint, note)


def _write_version(book: Book, name: str, recipe_json: Mapping[str, Any], spec: Any, fingerprint: str,
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


# ---------------------------------------------------------------------------------------
# Diff


def _same(a: Any, b: Any) -> bool:
    na, nb = _number(a), _number(b)
    if na is not None and nb is not None:
        return abs(na - nb) <= DIFF_RELATIVE_TOLERANCE * max(abs(na), abs(nb), 1e-300)
    return a == b


def _amounts(recipe_json: Mapping[str, Any]) -> dict[str, str]:
    """Reagent id -> how much of it, as text (``7.9594 g``, ``13.319 mL of 1 M``, ``50 mM``)."""
    reagents = _recipe_part(recipe_json).get("reagents")
    if isinstance(reagents, list):
        out = {}
        for r in reagents:
            if not isinstance(r, Mapping) or "id" not in r:
                continue
            parts = [f"{float(r['conc_mol_l']) * 1000:.6g} mM"] if _number(r.get("conc_mol_l")) is not None else []
            if _number(r.get("grams")) is not None:
                parts.append(f"{r['grams']:.4f} g")
            if _number(r.get("ml")) is not None:
                stock = f" of {r['stock_mol_l']:g} M" if _number(r.get("stock_mol_l")) is not None else ""
                parts.append(f"{r['ml']:.3f} mL{stock}")
            out[str(r["id"])] = ", ".join(parts)
        return out
    return {k: f"{v * 1000:.6g} mM" for k, v in composition_of(recipe_json).items()}


def diff_entries(a: BookEntry, b: BookEntry) -> list[str]:
    """What changed from version ``a`` to version ``b``, one line per change (empty: nothing)."""
    lines = []
    amounts_a, amounts_b = _amounts(a.recipe), _amounts(b.recipe)
    for rid in dict.fromkeys([*amounts_a, *amounts_b]):
        if rid not in amounts_b:
            lines.append(f"reagent removed: {rid} ({amounts_a[rid]})")
        elif rid not in amounts_a:
            lines.append(f"reagent added: {rid} ({amounts_b[rid]})")
        elif amounts_a[rid] != amounts_b[rid]:
            lines.append(f"reagent {rid}: {amounts_a[rid]} -> {amounts_b[rid]}")
    for key in dict.fromkeys([*a.figures, *b.figures]):
        va, vb = a.figures.get(key), b.figures.get(key)
        if not _same(va, vb):
            label, unit = FIGURE_LABELS.get(key, (key, ""))
            lines.append(f"{label}: {_figure_text(va)} -> {_figure_text(vb)}{unit}")
    for key in dict.fromkeys([*a.spec, *b.spec]):
        va, vb = a.spec.get(key), b.spec.get(key)
        if key not in FIGURE_KEYS and key != "ph" and not _same(va, vb):
            lines.append(f"spec {key}: {json.dumps(va)} -> {json.dumps(vb)}")
    steps_a, steps_b = _steps(a.recipe), _steps(b.recipe)
    if steps_a != steps_b:
        lines += [f"step {line[:1]} {line[2:]}" for line in difflib.ndiff(steps_a, steps_b) if line[:1] in "+-"]
    if a.catalog_fingerprint != b.catalog_fingerprint:
        lines.append(f"catalog: {a.catalog_fingerprint} -> {b.catalog_fingerprint} (the catalog changed between them)")
    if a.note != b.note:
        lines.append(f"note: {json.dumps(a.note)} -> {json.dumps(b.note)}")
    return lines


def _figure_text(value: Any) -> str:
    number = _number(value)
    return "none" if number is None else f"{number:.6g}"


def _steps(recipe_json: Mapping[str, Any]) -> list[str]:
    steps = _recipe_part(recipe_json).get("steps")
    return [str(s) for s in steps] if isinstance(steps, list) else []


def diff_versions(book: Book, name: str, version_a: int, version_b: int) -> list[str]:
    """:func:`diff_entries` of two saved versions of ``name``."""
    return diff_entries(show_recipe(book, name, version_a), show_recipe(book, name, version_b))


# ---------------------------------------------------------------------------------------
# Verify


@dataclass(frozen=True)
class Verification:
    """A saved recipe re-solved with a catalog: the saved and the new figures and their drift [pH]."""

    name: str
    version: int
    catalog_changed: bool
    saved_catalog_fingerprint: str
    catalog_fingerprint: str
    target_ph: float | None
    saved_verified_ph_at_use: float | None
    verified_ph_at_use: float | None
    drift_ph_at_use: float | None
    saved_meter_ph_at_prep: float | None
    meter_ph_at_prep: float | None
    drift_meter_ph: float | None
    temperature_c: float
    prep_temperature_c: float
    ionic_strength_mol_l: float | None
    capacity_mol_l_per_ph: float | None
    within_tolerance: bool
    tolerance_ph: float
    problem: str = ""

    def as_json(self) -> dict:
        return dataclasses.asdict(self)

    def text(self) -> str:
        """The readable report of ``poise book verify``."""
        out = [f"{self.name} version {self.version}, re-solved with "
               + ("a changed catalog" if self.catalog_changed else "the same catalog")
               + f" ({self.saved_catalog_fingerprint} -> {self.catalog_fingerprint})"]
        if self.problem:
            return "\n".join(out + [f"  cannot re-solve: {self.problem}"])
        out.append(f"  pH at {self.temperature_c:g} °C (use): saved {_figure_text(self.saved_verified_ph_at_use)}, "
                   f"now {self.verified_ph_at_use:.4f} (drift {self.drift_ph_at_use:+.4f})"
                   if self.drift_ph_at_use is not None else
                   f"  pH at {self.temperature_c:g} °C (use): now {_figure_text(self.verified_ph_at_use)}")
        if self.meter_ph_at_prep is not None:
            drift = f" (drift {self.drift_meter_ph:+.4f})" if self.drift_meter_ph is not None else ""
            out.append(f"  meter pH at {self.prep_temperature_c:g} °C (preparation): saved "
                       f"{_figure_text(self.saved_meter_ph_at_prep)}, now {self.meter_ph_at_prep:.4f}{drift}")
        if self.target_ph is not None and self.verified_ph_at_use is not None:
            out.append(f"  target pH {self.target_ph:g}: now {self.verified_ph_at_use - self.target_ph:+.4f} from it")
        verdict = "within" if self.within_tolerance else "OUTSIDE"
        out.append(f"  {verdict} ± {self.tolerance_ph:g} pH of the saved figures and the target")
        return "\n".join(out)


def _meter_composition(recipe_json: Mapping[str, Any], composition: dict[str, float]) -> dict[str, float]:
    """What the meter reads at preparation: the stock when the recipe says so (``stock.stock_composition_mol_l``)."""
    stock = _recipe_part(recipe_json).get("stock")
    given = stock.get("stock_composition_mol_l") if isinstance(stock, Mapping) else None
    if isinstance(given, Mapping) and given:
        return {str(k): float(v) for k, v in given.items() if _number(v) is not None}
    return composition


def _drift(now: float | None, saved: float | None) -> float | None:
    return None if now is None or saved is None else now - saved


def verify_entry(entry: BookEntry, catalog: Catalog | None = None) -> Verification:
    """Re-solve a saved recipe's composition with ``catalog`` (default: today's shipped catalog).

    The stored composition is solved at the use temperature and (what the meter reads) at
    the preparation temperature in one batched call of
    :func:`selector.chemistry.equilibrium.solve_equilibrium`; the drift is new − saved.
    ``within_tolerance``: every drift, and the new pH at use from the target, within
    :data:`VERIFY_DRIFT_TOLERANCE_PH`.  A reagent the catalog no longer has, or a solution
    the engine cannot solve, is reported in ``problem`` (and is not within tolerance).
    """
    from selector.chemistry.equilibrium import solve_equilibrium

    catalog = catalog if catalog is not None else load_catalog()
    figures = entry.figures
    use_c = figures.get("temperature_c", 25.0)
    prep_c = figures.get("prep_temperature_c", use_c)
    composition = composition_of(entry.recipe)
    meter = _meter_composition(entry.recipe, composition)
    fingerprint = catalog_fingerprint(catalog)
    failed = Verification(
        name=entry.name, version=entry.version, catalog_changed=fingerprint != entry.catalog_fingerprint,
        saved_catalog_fingerprint=entry.catalog_fingerprint, catalog_fingerprint=fingerprint,
        target_ph=figures.get("target_ph"), saved_verified_ph_at_use=figures.get("verified_ph_at_use"),
        verified_ph_at_use=None, drift_ph_at_use=None, saved_meter_ph_at_prep=figures.get("meter_ph_at_prep"),
        meter_ph_at_prep=None, drift_meter_ph=None, temperature_c=use_c, prep_temperature_c=prep_c,
        ionic_strength_mol_l=None, capacity_mol_l_per_ph=None, within_tolerance=False,
        tolerance_ph=VERIFY_DRIFT_TOLERANCE_PH)
    ids = list(dict.fromkeys([*composition, *meter]))
    missing = [r for r in ids if r not in catalog.reagents]
    if missing:
        return dataclasses.replace(failed, problem=f"reagent(s) no longer in the catalog: {', '.join(missing)}")
    amounts = np.array([[composition.get(r, 0.0) for r in ids], [meter.get(r, 0.0) for r in ids]])
    try:
        eq = solve_equilibrium(ids, amounts, np.array([use_c, prep_c]), catalog=catalog, strict=False)
    except InputError as error:
        return dataclasses.replace(failed, problem=str(error))
    if int(eq.status[0]) != 0 or int(eq.status[1]) != 0:
        return dataclasses.replace(failed, problem=eq.status_message(0 if int(eq.status[0]) != 0 else 1))
    ph_use, ph_prep = float(eq.ph[0]), float(eq.ph[1])
    drift_use = _drift(ph_use, failed.saved_verified_ph_at_use)
    drift_prep = _drift(ph_prep, failed.saved_meter_ph_at_prep)
    gaps = [d for d in (drift_use, drift_prep) if d is not None]
    if failed.target_ph is not None:
        gaps.append(ph_use - failed.target_ph)
    return dataclasses.replace(
        failed, verified_ph_at_use=ph_use, drift_ph_at_use=drift_use,
        meter_ph_at_prep=ph_prep if "meter_ph_at_prep" in figures else None, drift_meter_ph=drift_prep,
        ionic_strength_mol_l=float(eq.ionic_strength_mol_l[0]), capacity_mol_l_per_ph=float(eq.capacity_mol_l_per_ph[0]),
        within_tolerance=all(abs(g) <= VERIFY_DRIFT_TOLERANCE_PH for g in gaps))


def verify_recipe(book: Book, name: str, version: int | None = None, catalog: Catalog | None = None,
                  record: bool = True) -> Verification:
    """:func:`verify_entry` of a saved version (default: the latest); with ``record`` the result is logged in the book."""
    entry = show_recipe(book, name, version)
    result = verify_entry(entry, catalog)
    if record:
        with book.writing() as con:
            con.execute("INSERT INTO verifications (recipe_id, version, verified_at, catalog_fingerprint, "
                        "verified_ph_at_use, drift_ph, within_tolerance) SELECT recipe_id, ?, ?, ?, ?, ?, ? "
                        "FROM recipes WHERE name = ?",
                        (entry.version, utc_now(), result.catalog_fingerprint, result.verified_ph_at_use,
                         result.drift_ph_at_use, int(result.within_tolerance), name))
    return result


def verification_log(book: Book, name: str) -> list[dict]:
    """Every recorded verification of ``name``, oldest first."""
    with book.errors():
        rows = book.connection.execute(
            "SELECT x.version, x.verified_at, x.catalog_fingerprint, x.verified_ph_at_use, x.drift_ph, "
            "x.within_tolerance FROM verifications x JOIN recipes r USING (recipe_id) WHERE r.name = ? "
            "ORDER BY x.rowid", (name,)).fetchall()
    keys = ("version", "verified_at", "catalog_fingerprint", "verified_ph_at_use", "drift_ph", "within_tolerance")
    return [dict(zip(keys, row)) for row in rows]


# ---------------------------------------------------------------------------------------
# Export and import


@dataclass(frozen=True)
class Sheet:
    """What every export shows, read once from a saved entry; each format is one template over it."""

    title: str
    subtitle: str
    reagents: tuple[tuple[str, str, str, str], ...]   # name, role, final mM, amount
    steps: tuple[str, ...]
    figures: tuple[tuple[str, str], ...]              # label, value with unit
    warnings: tuple[str, ...]
    cautions: tuple[str, ...]                          # ends with the safety notice


FIGURE_LABELS = {"target_ph": ("target pH", ""), "temperature_c": ("use temperature", " °C"),
                 "prep_temperature_c": ("preparation temperature", " °C"),
                 "verified_ph_at_use": ("verified pH at use", ""), "meter_ph_at_prep": ("meter pH at preparation", ""),
                 "ionic_strength_mol_l": ("ionic strength", " mol/L"),
                 "capacity_mol_l_per_ph": ("buffer capacity β", " mol/L per pH"),
                 "osmolarity_osmol_l": ("osmolarity (ideal)", " Osm/L"), "volume_l": ("volume", " L"),
                 "cost": ("reagent cost (demo or sheet prices)", "")}


def _reagent_rows(recipe_json: Mapping[str, Any], catalog: Catalog) -> tuple[tuple[str, str, str, str], ...]:
    reagents = _recipe_part(recipe_json).get("reagents")
    rows = []
    if isinstance(reagents, list):
        for r in reagents:
            if not isinstance(r, Mapping) or "id" not in r:
                continue
            amount = ""
            if _number(r.get("grams")) is not None:
                amount = f"{r['grams']:.4f} g"
            elif _number(r.get("ml")) is not None:
                stock = f" of {r['stock_mol_l']:g} M" if _number(r.get("stock_mol_l")) is not None else ""
                amount = f"{r['ml']:.3f} mL{stock}"
            conc = _number(r.get("conc_mol_l"))
            rows.append((str(r.get("name", r["id"])), str(r.get("role", "")),
                         "" if conc is None else f"{conc * 1000:.4g}", amount))
        return tuple(rows)
    for rid, conc in composition_of(recipe_json).items():
        name = catalog.reagents[rid].name if rid in catalog.reagents else rid
        rows.append((name, "", f"{conc * 1000:.4g}", ""))
    return tuple(rows)


def _cautions(recipe_json: Mapping[str, Any], catalog: Catalog) -> tuple[str, ...]:
    """The recipe's cautions (or, when it has none, those of its hazardous reagents), ending with the notice."""
    given = _recipe_part(recipe_json).get("cautions")
    cautions = [str(c) for c in given] if isinstance(given, list) else []
    if not cautions:
        cautions = hazard_cautions([r for r in composition_of(recipe_json) if r in catalog.reagents], catalog)
    if SAFETY_NOTICE not in cautions:
        cautions.append(SAFETY_NOTICE)
    return tuple(cautions)


def sheet_of(entry: BookEntry, catalog: Catalog | None = None) -> Sheet:
    """The printable content of a saved version."""
    catalog = catalog if catalog is not None else load_catalog()
    part = _recipe_part(entry.recipe)
    figures = []
    for key in FIGURE_KEYS:
        if key in entry.figures:
            label, unit = FIGURE_LABELS[key]
            value = entry.figures[key]
            text = f"{value:.4f}" if key in PH_KEYS else f"{value:.6g}"
            if key == "cost" and isinstance(entry.recipe.get("currency"), str):
                unit = f" {entry.recipe['currency']}"
            figures.append((label, text + unit))
    verified = entry.recipe.get("verified")
    warnings = part.get("warnings") or (verified.get("warnings") if isinstance(verified, Mapping) else None)
    warnings = warnings if isinstance(warnings, list) else []
    subtitle = (f"version {entry.version}, saved {entry.created_at}; catalog {entry.catalog_fingerprint}"
                + (f"; note: {entry.note}" if entry.note else ""))
    target = entry.figures.get("target_ph")
    title = entry.name + (f": pH {target:g}" if target is not None else "") + (
        f" at {entry.figures['temperature_c']:g} °C" if "temperature_c" in entry.figures else "")
    return Sheet(title, subtitle, _reagent_rows(entry.recipe, catalog), tuple(_steps(entry.recipe)),
                 tuple(figures), tuple(str(w) for w in warnings), _cautions(entry.recipe, catalog))


def sheet_markdown(sheet: Sheet) -> str:
    """The Markdown template."""
    out = [f"# {sheet.title}", "", sheet.subtitle, "", "| reagent | role | final mM | amount |",
           "| --- | --- | --- | --- |"]
    out += [f"| {' | '.join(cell.replace('|', '/') for cell in row)} |" for row in sheet.reagents]
    if sheet.steps:
        out += ["", "## Steps", ""] + [f"{i}. {s}" for i, s in enumerate(sheet.steps, 1)]
    out += ["", "## Figures (as saved)", ""] + [f"- {label}: {value}" for label, value in sheet.figures]
    if sheet.warnings:
        out += ["", "## Warnings", ""] + [f"- {w}" for w in sheet.warnings]
    out += ["", "## Cautions", ""] + [f"- {c}" for c in sheet.cautions]
    return "\n".join(out) + "\n"


def sheet_html(sheet: Sheet) -> str:
    """The HTML template: a self-contained page with print styles."""
    esc = html.escape
    rows = "".join("<tr>" + "".join(f"<td>{esc(cell)}</td>" for cell in row) + "</tr>" for row in sheet.reagents)
    steps = "".join(f"<li>{esc(s)}</li>" for s in sheet.steps)
    figures = "".join(f"<li>{esc(label)}: {esc(value)}</li>" for label, value in sheet.figures)
    warnings = "".join(f"<li>{esc(w)}</li>" for w in sheet.warnings)
    cautions = "".join(f"<li>{esc(c)}</li>" for c in sheet.cautions)
    return f"""<!doctype html>
<html lang="en"><head><meta charset="utf-8"><title>{esc(sheet.title)}</title>
<style>body{{font-family:sans-serif;max-width:46em;margin:2em auto}}table{{border-collapse:collapse}}
td,th{{border:1px solid #999;padding:.3em .6em}}@media print{{body{{margin:0}}}}</style></head><body>
<h1>{esc(sheet.title)}</h1>
<p>{esc(sheet.subtitle)}</p>
<table><tr><th>reagent</th><th>role</th><th>final mM</th><th>amount</th></tr>{rows}</table>
{f"<h2>Steps</h2><ol>{steps}</ol>" if steps else ""}
<h2>Figures (as saved)</h2><ul>{figures}</ul>
{f"<h2>Warnings</h2><ul>{warnings}</ul>" if warnings else ""}
<h2>Cautions</h2><ul>{cautions}</ul>
</body></html>
"""


def sheet_csv(sheet: Sheet) -> str:
    """The CSV template: one row per item, ``section, item, value, detail`` (cautions included)."""
    rows: list[list[str]] = [["recipe", sheet.title, "", sheet.subtitle]]
    rows += [["reagent", name, amount, f"{role}; final {mm} mM" if role else f"final {mm} mM"]
             for name, role, mm, amount in sheet.reagents]
    rows += [["step", str(i), "", s] for i, s in enumerate(sheet.steps, 1)]
    rows += [["figure", label, value, ""] for label, value in sheet.figures]
    rows += [["warning", "", "", w] for w in sheet.warnings]
    rows += [["caution", "", "", c] for c in sheet.cautions]
    return write_csv(["section", "item", "value", "detail"], rows, line_end="\r\n")


#: One template per text format.
SHEET_TEMPLATES = {"md": sheet_markdown, "html": sheet_html, "csv": sheet_csv}


def export_entry(entry: BookEntry, fmt: str, catalog: Catalog | None = None) -> str:
    """A saved version as ``md``, ``html``, ``csv`` (:class:`Sheet` templates) or ``json``.

    The JSON is the entry document (:meth:`BookEntry.document`) with ``cautions``: the
    recipe's cautions ending with the safety notice, as every other format shows them.
    """
    if fmt == "json":
        catalog = catalog if catalog is not None else load_catalog()
        document = dict(entry.document(), cautions=list(_cautions(entry.recipe, catalog)))
        return json.dumps(document, indent=2) + "\n"
    if fmt not in SHEET_TEMPLATES:
        raise BookError(f"unknown export format {echo(fmt)}; expected one of {', '.join(EXPORT_FORMATS)}")
    return SHEET_TEMPLATES[fmt](sheet_of(entry, catalog))


def export_recipe(book: Book, name: str, fmt: str, version: int | None = None,
                  catalog: Catalog | None = None) -> str:
    """:func:`export_entry` of a saved version of ``name`` (default: the latest)."""
    if fmt not in EXPORT_FORMATS:
        raise BookError(f"unknown export format {echo(fmt)}; expected one of {', '.join(EXPORT_FORMATS)}")
    return export_entry(show_recipe(book, name, version), fmt, catalog)


def parse_entry(data: bytes) -> dict:
    """An exported entry (``export --format json``) from its bytes, checked.

    Raises
    ------
    BookError
        for a file too large, not UTF-8 JSON, or not an entry (with what is expected).
    """
    if len(data) > IMPORT_MAX_BYTES:
        raise BookError(f"the import file has {len(data)} bytes; at most {IMPORT_MAX_BYTES} are read")
    try:
        document = json.loads(data.decode("utf-8"))
    except (UnicodeDecodeError, ValueError) as error:
        raise BookError(f"the import file is not UTF-8 JSON ({error}); expected the JSON of "
                        "'poise book export NAME --format json'") from None
    if not isinstance(document, dict) or document.get("format") != ENTRY_FORMAT:
        raise BookError(f"the import file is not a poise book entry (no \"format\": \"{ENTRY_FORMAT}\"); "
                        "expected the JSON of 'poise book export NAME --format json'")
    if document.get("format_version") != ENTRY_FORMAT_VERSION:
        raise BookError(f"the import file is entry format {echo(document.get('format_version'))}; "
                        f"this poise reads format {ENTRY_FORMAT_VERSION}")
    for key, kind in (("name", str), ("recipe", dict), ("spec", dict)):
        if not isinstance(document.get(key), kind):
            raise BookError(f"the import file's {key!r} must be a JSON {'text' if kind is str else 'object'}")
    if not composition_of(document["recipe"]):
        raise BookError("the import file's recipe has no composition (composition_mol_l or reagents)")
    return document


def import_recipe(book: Book, data: bytes, name: str | None = None, catalog: Catalog | None = None) -> BookEntry:
    """Add an exported entry to the book as the next version of its name (or of ``name``).

    The recipe, spec and note are kept; the catalog fingerprint is the one it was saved with
    (so :func:`verify_recipe` shows whether this catalog differs), the note says it was imported.
    """
    document = parse_entry(data)
    target = name if name is not None else document["name"]
    note = str(document.get("note") or "")
    origin = f"imported from version {document.get('version')} saved {document.get('created_at')}"
    fingerprint = document.get("catalog_fingerprint")
    if not isinstance(fingerprint, str) or not fingerprint or len(fingerprint) > 64:
        fingerprint = catalog_fingerprint(catalog if catalog is not None else load_catalog())
    return _write_version(book, target, document["recipe"], document["spec"], fingerprint,
                          (f"{note} ({origin})" if note else origin)[:NOTE_MAX_CHARS])
