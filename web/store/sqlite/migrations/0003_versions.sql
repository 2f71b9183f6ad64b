-- capbank store, version 3: every cell and design carries a version, 1
-- when written first and one more at each change, so that an edit made on
-- an old copy is refused instead of overwriting a newer one.
ALTER TABLE cells ADD COLUMN version INTEGER NOT NULL DEFAULT 1;
ALTER TABLE designs ADD COLUMN version INTEGER NOT NULL DEFAULT 1;
