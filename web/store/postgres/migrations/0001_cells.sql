-- capbank store on PostgreSQL, version 1: the cell library, as SQLite's
-- version 1. Each cell is kept as its design-file JSON (sizing.Cell), with
-- the figures the library page filters on copied into columns. Text
-- compares byte for byte (COLLATE "C"), as in SQLite, so both list the
-- cells in the same order.
CREATE TABLE cells (
    id            TEXT COLLATE "C" PRIMARY KEY,
    name          TEXT COLLATE "C" NOT NULL DEFAULT '',
    rated_v       DOUBLE PRECISION NOT NULL,
    capacitance_f DOUBLE PRECISION NOT NULL,
    source        TEXT NOT NULL DEFAULT '',
    read_only     INTEGER NOT NULL DEFAULT 0,
    cell_json     TEXT NOT NULL,
    created_at    TEXT COLLATE "C" NOT NULL,
    updated_at    TEXT COLLATE "C" NOT NULL
);
