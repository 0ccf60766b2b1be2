-- Version 5: furnace and site snapshots beside the recipe's, where a
-- run came from. A snapshot's kind says which of the user's three files it
-- holds (every snapshot before this version is a recipe); a run names the
-- furnace and site snapshots it was logged with (NULL for runs logged
-- before, which keep their recorded furnace path) and its source: "" for a
-- run logged here, else the history sheet, sheet name and row it was
-- imported from; and the audit trail of corrected measurements.
ALTER TABLE snapshots ADD COLUMN kind TEXT NOT NULL DEFAULT 'recipe' CHECK (kind IN ('recipe', 'furnace', 'site'));
ALTER TABLE runs ADD COLUMN furnace_sha256 TEXT REFERENCES snapshots (sha256);
ALTER TABLE runs ADD COLUMN site_sha256 TEXT REFERENCES snapshots (sha256);
ALTER TABLE runs ADD COLUMN source TEXT NOT NULL DEFAULT '';

-- Measurements corrected with outcome add --replace: the value replaced,
-- the value that replaced it, who and when (the audit trail run show
-- --history prints).
CREATE TABLE outcome_history (
	id          INTEGER PRIMARY KEY,
	run_id      INTEGER NOT NULL REFERENCES runs (id),
	metric      TEXT NOT NULL,
	unit        TEXT NOT NULL,
	old_value   REAL NOT NULL,
	old_entered TEXT NOT NULL,
	new_value   REAL NOT NULL,
	new_entered TEXT NOT NULL,
	who         TEXT NOT NULL,
	at          TEXT NOT NULL
);
CREATE INDEX outcome_history_run ON outcome_history (run_id);
