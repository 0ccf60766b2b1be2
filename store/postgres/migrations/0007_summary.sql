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
	run_id BIGINT PRIMARY KEY REFERENCES runs (id),
	code   TEXT COLLATE "C" NOT NULL,
	growth_temperature_c DOUBLE PRECISION,
	growth_time_min DOUBLE PRECISION,
	growth_pressure_torr DOUBLE PRECISION,
	ch4_partial_pa DOUBLE PRECISION,
	h2_partial_pa DOUBLE PRECISION,
	ch4_h2_ratio DOUBLE PRECISION,
	ch4_flow_sccm DOUBLE PRECISION,
	h2_flow_sccm DOUBLE PRECISION,
	ar_flow_sccm DOUBLE PRECISION,
	total_flow_sccm DOUBLE PRECISION,
	ch4_supersaturation DOUBLE PRECISION,
	growth_residence_s DOUBLE PRECISION,
	anneal_temperature_c DOUBLE PRECISION,
	anneal_time_min DOUBLE PRECISION,
	anneal_pressure_torr DOUBLE PRECISION,
	anneal_h2_flow_sccm DOUBLE PRECISION,
	ramp_rate_c_min DOUBLE PRECISION,
	cool_rate_c_min DOUBLE PRECISION,
	total_time_min DOUBLE PRECISION,
	foil_thickness_um DOUBLE PRECISION,
	foil_purity_pct DOUBLE PRECISION,
	growth_temperature_c_logged DOUBLE PRECISION,
	growth_time_min_logged DOUBLE PRECISION,
	growth_pressure_torr_logged DOUBLE PRECISION,
	ch4_partial_pa_logged DOUBLE PRECISION,
	h2_partial_pa_logged DOUBLE PRECISION,
	ch4_h2_ratio_logged DOUBLE PRECISION,
	ch4_flow_sccm_logged DOUBLE PRECISION,
	h2_flow_sccm_logged DOUBLE PRECISION,
	ar_flow_sccm_logged DOUBLE PRECISION,
	total_flow_sccm_logged DOUBLE PRECISION,
	ch4_supersaturation_logged DOUBLE PRECISION,
	growth_residence_s_logged DOUBLE PRECISION,
	anneal_temperature_c_logged DOUBLE PRECISION,
	anneal_time_min_logged DOUBLE PRECISION,
	anneal_pressure_torr_logged DOUBLE PRECISION,
	anneal_h2_flow_sccm_logged DOUBLE PRECISION,
	ramp_rate_c_min_logged DOUBLE PRECISION,
	cool_rate_c_min_logged DOUBLE PRECISION,
	total_time_min_logged DOUBLE PRECISION,
	foil_thickness_um_logged DOUBLE PRECISION,
	foil_purity_pct_logged DOUBLE PRECISION,
	coverage DOUBLE PRECISION,
	nuclei_density DOUBLE PRECISION,
	island_density DOUBLE PRECISION,
	domain_size DOUBLE PRECISION,
	layers DOUBLE PRECISION,
	raman_2d_g DOUBLE PRECISION,
	raman_d_g DOUBLE PRECISION,
	raman_2d_fwhm DOUBLE PRECISION,
	sheet_resistance DOUBLE PRECISION,
	transmittance_550 DOUBLE PRECISION
);

CREATE TABLE run_summary_extra (
	name   TEXT COLLATE "C" NOT NULL,
	run_id BIGINT NOT NULL REFERENCES runs (id),
	value  DOUBLE PRECISION NOT NULL,
	PRIMARY KEY (name, run_id)
);
CREATE INDEX run_summary_extra_run ON run_summary_extra (run_id);
