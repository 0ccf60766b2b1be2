-- Version 7: what the kinetics model needs of a recipe on a furnace (the
-- carbon-bearing segments of its plan), derived by foilrun when a run is
-- logged and read by fit instead of the recipe file. Keyed by the recipe
-- snapshot's hash, the hash of the furnace file the plan was derived on
-- (a furnace snapshot, or a file given with --furnace, so no reference to
-- snapshots) and the derivation version; data is foilrun's encoding.
-- Derived: db check --repair rebuilds the table, db copy leaves it out.
CREATE TABLE profiles (
	recipe_sha256  TEXT NOT NULL,
	furnace_sha256 TEXT NOT NULL,
	version        INTEGER NOT NULL,
	data           BLOB NOT NULL,
	PRIMARY KEY (recipe_sha256, furnace_sha256, version)
);
