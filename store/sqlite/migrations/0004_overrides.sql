-- Version 4 (to follow the history-import migration when both are merged):
-- runs logged despite check errors or safety stops, with the reason, the
-- operator and the findings (a JSON array of store.OverrideFinding) shown
-- when the run was logged.
CREATE TABLE run_overrides (
	run_id   INTEGER PRIMARY KEY REFERENCES runs (id),
	reason   TEXT NOT NULL,
	operator TEXT NOT NULL,
	at       TEXT,
	findings TEXT NOT NULL
);
