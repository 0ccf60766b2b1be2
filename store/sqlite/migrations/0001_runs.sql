-- Version 1: recipe snapshots, runs with their code counter, notes,
-- derived recipe parameters and outcome metrics.
CREATE TABLE snapshots (
	sha256     TEXT PRIMARY KEY,            -- hex SHA-256 of content
	name       TEXT NOT NULL,               -- recipe name
	file       TEXT NOT NULL,               -- path it was read from
	content    BLOB NOT NULL,               -- the recipe file, byte for byte
	created_at TEXT NOT NULL
);

CREATE TABLE counters (
	name  TEXT PRIMARY KEY,                 -- e.g. run-2026
	value INTEGER NOT NULL
);

CREATE TABLE runs (
	id            INTEGER PRIMARY KEY,
	code          TEXT NOT NULL UNIQUE,
	status        TEXT NOT NULL CHECK (status IN ('planned', 'running', 'done', 'aborted')),
	recipe_sha256 TEXT REFERENCES snapshots (sha256),
	recipe_name   TEXT NOT NULL,
	furnace       TEXT NOT NULL,
	operator      TEXT NOT NULL,
	lot           TEXT NOT NULL,
	started_at    TEXT,
	ended_at      TEXT,
	created_at    TEXT NOT NULL
);

CREATE TABLE run_notes (
	id     INTEGER PRIMARY KEY,
	run_id INTEGER NOT NULL REFERENCES runs (id),
	at     TEXT NOT NULL,
	text   TEXT NOT NULL
);
CREATE INDEX run_notes_run ON run_notes (run_id);

CREATE TABLE run_params (
	run_id INTEGER NOT NULL REFERENCES runs (id),
	name   TEXT NOT NULL,
	value  REAL NOT NULL,
	PRIMARY KEY (run_id, name)
) WITHOUT ROWID;

CREATE TABLE outcomes (
	id          INTEGER PRIMARY KEY,
	run_id      INTEGER NOT NULL REFERENCES runs (id),
	metric      TEXT NOT NULL,
	value       REAL NOT NULL,              -- in unit
	unit        TEXT NOT NULL,              -- canonical unit of a known metric
	entered     TEXT NOT NULL,              -- as typed
	method      TEXT NOT NULL,
	measured_at TEXT
);
CREATE INDEX outcomes_run ON outcomes (run_id);
