// Package sqldb implements store.RunLog over database/sql for every SQL
// back end. The queries are written in the SQL that SQLite and PostgreSQL
// share ("?" placeholders, INSERT … ON CONFLICT … DO NOTHING/UPDATE,
// RETURNING); what differs between back ends is one Dialect value: how
// placeholders are written, the migration files (DDL), a consistent read,
// backup and integrity checks. store/sqlite and store/postgres supply the
// dialects. Copy (and DB.CopyTo, store.Copier) moves a whole log between
// any two of them.
//
// Every write that touches more than one row runs in one transaction.
// Times are stored as fixed-width UTC text (2006-01-02T15:04:05.000000Z),
// so they sort as text; missing numbers and times are NULL.
//
// Opening: Open with Options{ReadOnly: true} reads the schema version and
// nothing else (no migration, every write refused with store.ErrReadOnly);
// opened for writing, it migrates only a schema that is behind. Run-code
// counters are read as text with range checks (counter.go).
//
// Entry points: Open, Options, Versions, Migrate, Latest, Copy.
package sqldb
