-- Version 2: furnace-log actuals and deviations per step, attachments.
CREATE TABLE run_actuals (
	run_id   INTEGER NOT NULL REFERENCES runs (id),
	step     INTEGER NOT NULL,              -- 1-based
	label    TEXT NOT NULL,
	quantity TEXT NOT NULL,                 -- temperature, pressure, flow:<gas>, duration, start
	unit     TEXT NOT NULL,                 -- SI
	planned  REAL,
	mean     REAL,
	min      REAL,
	max      REAL,
	samples  INTEGER NOT NULL,
	PRIMARY KEY (run_id, step, quantity)
) WITHOUT ROWID;

CREATE TABLE run_deviations (
	id        INTEGER PRIMARY KEY,
	run_id    INTEGER NOT NULL REFERENCES runs (id),
	step      INTEGER NOT NULL,
	label     TEXT NOT NULL,
	quantity  TEXT NOT NULL,
	unit      TEXT NOT NULL,
	planned   REAL,
	actual    REAL,
	tolerance REAL,
	message   TEXT NOT NULL
);
CREATE INDEX run_deviations_run ON run_deviations (run_id);

CREATE TABLE attachments (
	id       INTEGER PRIMARY KEY,
	run_id   INTEGER NOT NULL REFERENCES runs (id),
	path     TEXT NOT NULL,
	sha256   TEXT NOT NULL,
	kind     TEXT NOT NULL,
	added_at TEXT NOT NULL
);
CREATE INDEX attachments_run ON attachments (run_id);
