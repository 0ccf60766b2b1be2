-- Version 7: the run summary, one row per run with every derived
-- parameter (and its logged twin) and the mean of every known metric as a
-- column, so that runs best, runs rank and --where read one table instead
-- of looking up each value; names outside those columns (gas flows and
-- metrics a lab added, imported columns) are rows of run_summary_extra.
-- Both are derived from run_params and outcomes: every write that changes
-- those rewrites the summary of its runs in the same transaction, db check
-- compares them and db check --repair rebuilds them. foilrun fills them
-- right after this migration, in its transaction (store/sqldb/summary.go).
CREATE TABLE run_summary (
	run_id INTEGER PRIMARY KEY REFERENCES runs (id),
	code   TEXT NOT NULL,
	growth_temperature_c REAL,
	growth_time_min REAL,
	growth_pressure_torr REAL,
	ch4_partial_pa REAL,
	h2_partial_pa REAL,
	ch4_h2_ratio REAL,
	ch4_flow_sccm REAL,
	h2_flow_sccm REAL,
	ar_flow_sccm REAL,
	total_flow_sccm REAL,
	ch4_supersaturation REAL,
	growth_residence_s REAL,
	anneal_temperature_c REAL,
	anneal_time_min REAL,
	anneal_pressure_torr REAL,
	anneal_h2_flow_sccm REAL,
	ramp_rate_c_min REAL,
	cool_rate_c_min REAL,
	total_time_min REAL,
	foil_thickness_um REAL,
	foil_purity_pct REAL,
	growth_temperature_c_logged REAL,
	growth_time_min_logged REAL,
	growth_pressure_torr_logged REAL,
	ch4_partial_pa_logged REAL,
	h2_partial_pa_logged REAL,
	ch4_h2_ratio_logged REAL,
	ch4_flow_sccm_logged REAL,
	h2_flow_sccm_logged REAL,
	ar_flow_sccm_logged REAL,
	total_flow_sccm_logged REAL,
	ch4_supersaturation_logged REAL,
	growth_residence_s_logged REAL,
	anneal_temperature_c_logged REAL,
	anneal_time_min_logged REAL,
	anneal_pressure_torr_logged REAL,
	anneal_h2_flow_sccm_logged REAL,
	ramp_rate_c_min_logged REAL,
	cool_rate_c_min_logged REAL,
	total_time_min_logged REAL,
	foil_thickness_um_logged REAL,
	foil_purity_pct_logged REAL,
	coverage REAL,
	nuclei_density REAL,
	island_density REAL,
	domain_size REAL,
	layers REAL,
	raman_2d_g REAL,
	raman_d_g REAL,
	raman_2d_fwhm REAL,
	sheet_resistance REAL,
	transmittance_550 REAL
);

CREATE TABLE run_summary_extra (
	name   TEXT NOT NULL,
	run_id INTEGER NOT NULL REFERENCES runs (id),
	value  REAL NOT NULL,
	PRIMARY KEY (name, run_id)
) WITHOUT ROWID;
CREATE INDEX run_summary_extra_run ON run_summary_extra (run_id);
