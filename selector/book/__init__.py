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

Modules: :mod:`~selector.book.content` (what a stored JSON says: composition, figures;
the catalog fingerprint), :mod:`~selector.book.store` (the file, schema, migrations and
saved versions), :mod:`~selector.book.diff`, :mod:`~selector.book.verify` and
:mod:`~selector.book.export` (formats, and import).

Every problem a user can cause (unknown name or version, a file that is not a book, a
locked or unwritable file, a bad import file) raises :class:`BookError`, one line.
"""

from __future__ import annotations

from selector.book.content import (
    FIGURE_KEYS,
    FIGURE_LABELS,
    PH_KEYS,
    catalog_fingerprint,
    composition_of,
    figures_of,
)
from selector.book.diff import diff_entries, diff_versions
from selector.book.export import (
    EXPORT_FORMATS,
    IMPORT_MAX_BYTES,
    Sheet,
    export_entry,
    export_recipe,
    import_recipe,
    parse_entry,
    sheet_of,
)
from selector.book.store import (
    APPLICATION_ID,
    BOOK_ENV_VAR,
    BOOK_FILE_NAME,
    BUSY_TIMEOUT_MS,
    ENTRY_FORMAT,
    ENTRY_FORMAT_VERSION,
    MIGRATIONS,
    NAME_MAX_CHARS,
    NOTE_MAX_CHARS,
    SCHEMA_VERSION,
    Book,
    BookEntry,
    RecipeSummary,
    book_exists,
    book_path,
    check_name,
    default_book_path,
    list_recipes,
    migrate,
    open_book,
    remove_recipe,
    save_recipe,
    show_recipe,
    versions_of,
)
from selector.book.verify import VERIFY_DRIFT_TOLERANCE_PH, Verification, verification_log, verify_entry, verify_recipe
from selector.errors import BookError
from selector.safety import SAFETY_NOTICE

__all__ = [
    "APPLICATION_ID",
    "BOOK_ENV_VAR",
    "BOOK_FILE_NAME",
    "BUSY_TIMEOUT_MS",
    "ENTRY_FORMAT",
    "ENTRY_FORMAT_VERSION",
    "EXPORT_FORMATS",
    "FIGURE_KEYS",
    "FIGURE_LABELS",
    "IMPORT_MAX_BYTES",
    "MIGRATIONS",
    "NAME_MAX_CHARS",
    "NOTE_MAX_CHARS",
    "PH_KEYS",
    "SAFETY_NOTICE",
    "SCHEMA_VERSION",
    "VERIFY_DRIFT_TOLERANCE_PH",
    "Verification",
    "Book",
    "BookEntry",
    "BookError",
    "RecipeSummary",
    "Sheet",
    "book_exists",
    "book_path",
    "catalog_fingerprint",
    "check_name",
    "composition_of",
    "default_book_path",
    "diff_entries",
    "diff_versions",
    "export_entry",
    "export_recipe",
    "figures_of",
    "import_recipe",
    "list_recipes",
    "migrate",
    "open_book",
    "parse_entry",
    "remove_recipe",
    "save_recipe",
    "sheet_of",
    "show_recipe",
    "verification_log",
    "verify_entry",
    "verify_recipe",
    "versions_of",
]
