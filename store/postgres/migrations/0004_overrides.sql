-- Version 4 (to follow the history-import migration when both are merged):
-- runs logged despite check errors or safety stops, with the reason, the
-- operator and the findings (a JSON array of store.OverrideFinding) shown
-- when the run was logged.
CREATE TABLE run_overrides (
	run_id   BIGINT PRIMARY KEY REFERENCES runs (id),
	reason   TEXT NOT NULL,
	operator TEXT COLLATE "C" NOT NULL,
	at       TEXT COLLATE "C",
	findings TEXT NOT NULL
);
