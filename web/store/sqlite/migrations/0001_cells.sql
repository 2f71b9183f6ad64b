-- capbank store, version 1: the cell library.
-- Each cell is kept as its design-file JSON (sizing.Cell), with the figures
-- the library page filters on copied into columns.
CREATE TABLE cells (
    id            TEXT PRIMARY KEY,
    name          TEXT NOT NULL DEFAULT '',
    rated_v       REAL NOT NULL,
    capacitance_f REAL NOT NULL,
    source        TEXT NOT NULL DEFAULT '',
    read_only     INTEGER NOT NULL DEFAULT 0,
    cell_json     TEXT NOT NULL,
    created_at    TEXT NOT NULL,
    updated_at    TEXT NOT NULL
) STRICT;
