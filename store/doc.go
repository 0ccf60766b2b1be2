// Package store is foilrun's run log: the domain types (runs, recipe
// snapshots, notes, derived recipe parameters, furnace-log actuals and
// deviations, outcome metrics, attachments), the RunLog interface every
// back end implements, and the back-end-independent pieces built on it:
// run codes, the table of known outcome metrics and their units, the
// binned "best" table and the Spearman ranking, and the JSON and CSV
// exchange formats.
//
// Back ends live in sub-packages: store/sqldb holds the database/sql
// implementation shared by every SQL back end (its dialect differences are
// one Dialect value), store/sqlite is the embedded default, store/postgres
// the shared lab server; every run log is a Copier, so a log moves whole
// between back ends. The --where
// language is store/query; the furnace controller's CSV log is read by
// store/furnacelog.
//
// Units: recipe parameters are stored in the units their names carry
// (growth_temperature_c in °C, …; see recipe.ParameterNames); outcome
// metrics in the canonical unit of each known metric (see Metrics);
// furnace-log actuals in SI (K, Pa, mol/s, s). Times are UTC.
//
// Validation (validate.go): every write passes RunRecord.Validate (and
// Note, Outcome, Attachment, Finish), an import Bundle.ValidateImport on
// top, so an import stores nothing an entry could not; run codes follow
// ValidateCode and code counters ParseCounter (code.go).
//
// Access: a back end opened read-only never migrates or writes, and its
// write methods fail with ErrReadOnly; a write the database refuses for
// lack of rights is a *PermissionError whose Hint names what is missing.
//
// Entry points: RunLog, Copier, RunRecord, ParseOutcome, ValidateCode,
// Best, Rank, WriteJSON, ReadJSON, WriteCSV, ReadCSV.
package store
