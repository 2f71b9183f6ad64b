-- capbank store, version 2: saved designs, and indexes for the library's
-- filters. A saved design keeps its own copy of every cell in its JSON, so
-- editing or deleting a library cell never changes a saved design.
CREATE TABLE designs (
    id          INTEGER PRIMARY KEY AUTOINCREMENT,
    name        TEXT NOT NULL,
    design_json TEXT NOT NULL,
    created_at  TEXT NOT NULL,
    updated_at  TEXT NOT NULL
) STRICT;
CREATE INDEX designs_name ON designs (name);
CREATE INDEX cells_rated_v ON cells (rated_v);
CREATE INDEX cells_capacitance_f ON cells (capacitance_f);
