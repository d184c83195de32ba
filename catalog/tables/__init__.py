"""One reader per catalog table.

Each module names its file (``TABLE``), the columns it must have (``COLUMNS``) and turns
the rows of :func:`catalog.rows.read_table` into frozen records, reporting every bad cell.
A reader receives the records of the tables it refers to, already read; the order and the
checks across tables are the loader's (:mod:`catalog.loader`).
"""
