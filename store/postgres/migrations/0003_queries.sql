-- Version 3: indexes for --where, best and rank, and the registry of
-- parameter and metric names (filled from the rows already logged).
CREATE INDEX run_params_name_value ON run_params (name, value);
DROP INDEX outcomes_run;
CREATE INDEX outcomes_run ON outcomes (run_id, metric);
CREATE INDEX outcomes_metric ON outcomes (metric, run_id, value);

CREATE TABLE names (
	name TEXT COLLATE "C" PRIMARY KEY,
	kind TEXT COLLATE "C" NOT NULL CHECK (kind IN ('param', 'metric')),
	unit TEXT COLLATE "C" NOT NULL
);
INSERT INTO names (name, kind, unit)
	SELECT DISTINCT name, 'param', '' FROM run_params
	ON CONFLICT (name) DO NOTHING;
INSERT INTO names (name, kind, unit)
	SELECT metric, 'metric', MIN(unit) FROM outcomes GROUP BY metric
	ON CONFLICT (name) DO NOTHING;
