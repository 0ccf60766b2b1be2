-- Version 4: furnace and site snapshots beside the recipe's, and where a
-- run came from; the same columns as the SQLite schema of the same
-- version (see there). Every snapshot before this version is a recipe;
-- runs logged before name no furnace or site snapshot (NULL).
ALTER TABLE snapshots ADD COLUMN kind TEXT COLLATE "C" NOT NULL DEFAULT 'recipe' CHECK (kind IN ('recipe', 'furnace', 'site'));
ALTER TABLE runs ADD COLUMN furnace_sha256 TEXT COLLATE "C" REFERENCES snapshots (sha256);
ALTER TABLE runs ADD COLUMN site_sha256 TEXT COLLATE "C" REFERENCES snapshots (sha256);
ALTER TABLE runs ADD COLUMN source TEXT COLLATE "C" NOT NULL DEFAULT '';
