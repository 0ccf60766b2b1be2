-- Version 6: the codes runs had in another log before runs import
-- --renumber gave them new ones, so run show OLD still finds them. One
-- old code may name several runs (two logs merged, each with its G26-0001).
CREATE TABLE run_aliases (
	run_id BIGINT NOT NULL REFERENCES runs (id),
	alias  TEXT NOT NULL,
	PRIMARY KEY (run_id, alias)
);
CREATE INDEX run_aliases_alias ON run_aliases (alias);
