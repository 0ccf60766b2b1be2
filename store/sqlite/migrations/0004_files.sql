-- Version 4: furnace and site snapshots beside the recipe's, and where a
-- run came from. A snapshot's kind says which of the user's three files it
-- holds (every snapshot before this version is a recipe); a run names the
-- furnace and site snapshots it was logged with (NULL for runs logged
-- before, which keep their recorded furnace path) and its source: "" for a
-- run logged here, else the history sheet, sheet name and row it was
-- imported from.
ALTER TABLE snapshots ADD COLUMN kind TEXT NOT NULL DEFAULT 'recipe' CHECK (kind IN ('recipe', 'furnace', 'site'));
ALTER TABLE runs ADD COLUMN furnace_sha256 TEXT REFERENCES snapshots (sha256);
ALTER TABLE runs ADD COLUMN site_sha256 TEXT REFERENCES snapshots (sha256);
ALTER TABLE runs ADD COLUMN source TEXT NOT NULL DEFAULT '';
