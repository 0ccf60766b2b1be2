package sqldb

import (
	"context"
	"database/sql"
	"fmt"
	"slices"
	"strings"

	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/query"
)

// The run summary (migration 0007) is derived from run_params and
// outcomes: one row per run in run_summary, with the run's code, a column
// per derived recipe parameter, per logged twin of one and per known
// metric (the metric's mean over the run's measurements, the database's
// AVG); every other name (a parameter or metric a lab added) is a row
// (name, run, value) of run_summary_extra. Best, rank and --where read
// one row per run from it instead of looking up each value.
//
// Every write goes through a writer, which notes the runs it touched
// (touch) and rewrites their summary just before it commits (summarise),
// so the summary never disagrees with the runs after a committed write.

// loggedSuffix ends the name of a derived parameter's logged twin, as
// cmd/foilrun/internal/lab stores them (lab.LoggedSuffix).
const loggedSuffix = "_logged"

// summaryColumns are the columns of run_summary after run_id and code:
// the derived parameters, their logged twins, then the known metrics.
// A test checks that both back ends' migrations create exactly these.
var summaryColumns, paramColumns, metricColumns = summaryLayout()

func summaryLayout() (all []string, params, metrics map[string]bool) {
	params, metrics = map[string]bool{}, map[string]bool{}
	var twins []string
	for _, p := range recipe.ParameterNames() {
		all = append(all, p.Name)
		twins = append(twins, p.Name+loggedSuffix)
	}
	all = append(all, twins...)
	for _, c := range all {
		params[c] = true
	}
	for _, m := range store.Metrics() {
		all = append(all, m.Name)
		metrics[m.Name] = true
	}
	return all, params, metrics
}

// summarySchema is how --where reads the summary (query.Schema.Summary).
var summarySchema = func() *query.Summary {
	sm := &query.Summary{Params: map[string]string{}, Metrics: map[string]string{}, Extra: "run_summary_extra"}
	for c := range paramColumns {
		sm.Params[c] = "su." + c
	}
	for c := range metricColumns {
		sm.Metrics[c] = "su." + c
	}
	return sm
}()

// SummaryColumns lists the columns of run_summary after run_id and code,
// for the tests of the migrations.
func SummaryColumns() []string { return slices.Clone(summaryColumns) }

// execer is what the summary's writes need: a *sql.Tx.
type execer interface {
	Querier
	ExecContext(ctx context.Context, query string, args ...any) (sql.Result, error)
}

// idRange is the runs with ids lo to hi, both included.
type idRange struct{ lo, hi int64 }

// ranges returns ids (any order, repeats allowed) as sorted runs of
// consecutive ids.
func ranges(ids []int64) []idRange {
	s := slices.Clone(ids)
	slices.Sort(s)
	s = slices.Compact(s)
	var out []idRange
	for _, id := range s {
		if n := len(out); n > 0 && out[n-1].hi == id-1 {
			out[n-1].hi = id
			continue
		}
		out = append(out, idRange{id, id})
	}
	return out
}

// quoteList writes names as a list of SQL string literals; the names are
// the fixed column names above, never user input.
func quoteList(names []string) string {
	qs := make([]string, len(names))
	for i, n := range names {
		qs[i] = "'" + n + "'"
	}
	return strings.Join(qs, ", ")
}

// The SELECTs that derive the summary afresh for the runs whose id
// passes cond ("BETWEEN ? AND ?", or "IS NOT NULL" for every run): the
// rows of run_summary (freshSummary) and of run_summary_extra
// (freshExtra, parameters then metrics). The names in them are the fixed
// column names above, never user input.
func freshSummary(cond string) string {
	var sel, pcols, mcols []string
	for _, c := range summaryColumns {
		if paramColumns[c] {
			sel = append(sel, "p."+c)
			pcols = append(pcols, fmt.Sprintf("MAX(CASE WHEN name = '%s' THEN value END) AS %s", c, c))
		} else {
			sel = append(sel, "o."+c)
			mcols = append(mcols, fmt.Sprintf("AVG(CASE WHEN metric = '%s' THEN value END) AS %s", c, c))
		}
	}
	return "SELECT r.id, r.code, " + strings.Join(sel, ", ") + " FROM runs r" +
		" LEFT JOIN (SELECT run_id, " + strings.Join(pcols, ", ") + " FROM run_params WHERE run_id " + cond + " GROUP BY run_id) p ON p.run_id = r.id" +
		" LEFT JOIN (SELECT run_id, " + strings.Join(mcols, ", ") + " FROM outcomes WHERE run_id " + cond + " GROUP BY run_id) o ON o.run_id = r.id" +
		" WHERE r.id " + cond
}

func freshExtra(cond string) [2]string {
	var params, metrics []string
	for _, c := range summaryColumns {
		if paramColumns[c] {
			params = append(params, c)
		} else {
			metrics = append(metrics, c)
		}
	}
	return [2]string{
		"SELECT name, run_id, value FROM run_params WHERE run_id " + cond +
			" AND name NOT IN (" + quoteList(params) + ") AND name IN (SELECT name FROM names WHERE kind = 'param')",
		"SELECT metric, run_id, AVG(value) FROM outcomes WHERE run_id " + cond +
			" AND metric NOT IN (" + quoteList(metrics) + ") AND metric IN (SELECT name FROM names WHERE kind = 'metric') GROUP BY run_id, metric",
	}
}

const (
	summaryInsert = "INSERT INTO run_summary (run_id, code, "
	extraInsert   = "INSERT INTO run_summary_extra (name, run_id, value) "
	byRange       = "BETWEEN ? AND ?"
)

// rangeStatements rewrite the summary of a range of runs by upserts
// (INSERT … ON CONFLICT DO UPDATE), so a writer needs no DELETE: a run's
// parameters and metrics are only ever added or replaced, never removed.
var rangeStatements = func() []string {
	set := make([]string, len(summaryColumns))
	for i, c := range summaryColumns {
		set[i] = c + " = excluded." + c
	}
	ex := freshExtra(byRange)
	return []string{
		summaryInsert + strings.Join(summaryColumns, ", ") + ") " + freshSummary(byRange) +
			" ON CONFLICT (run_id) DO UPDATE SET code = excluded.code, " + strings.Join(set, ", "),
		extraInsert + ex[0] + " ON CONFLICT (name, run_id) DO UPDATE SET value = excluded.value",
		extraInsert + ex[1] + " ON CONFLICT (name, run_id) DO UPDATE SET value = excluded.value",
	}
}()

// allStatements empty the summary and derive it afresh for every run.
var allStatements = func() []string {
	ex := freshExtra("IS NOT NULL")
	return []string{
		"DELETE FROM run_summary_extra",
		"DELETE FROM run_summary",
		summaryInsert + strings.Join(summaryColumns, ", ") + ") " + freshSummary("IS NOT NULL"),
		extraInsert + ex[0],
		extraInsert + ex[1],
	}
}()

// summarise rewrites the summary of the runs with the ids, inside tx.
func summarise(ctx context.Context, tx execer, d Dialect, ids []int64) error {
	for _, r := range ranges(ids) {
		for _, st := range rangeStatements {
			n := strings.Count(st, byRange)
			args := make([]any, 0, 2*n)
			for range n {
				args = append(args, r.lo, r.hi)
			}
			if _, err := tx.ExecContext(ctx, d.Rebind(st), args...); err != nil {
				return fmt.Errorf("run summary of runs %d to %d: %w", r.lo, r.hi, err)
			}
		}
	}
	return nil
}

// rebuildSummary empties the summary and derives it afresh for every
// run, inside tx.
func rebuildSummary(ctx context.Context, tx execer, d Dialect) error {
	for _, st := range allStatements {
		if _, err := tx.ExecContext(ctx, st); err != nil {
			return fmt.Errorf("rebuild the run summary: %w", err)
		}
	}
	return nil
}

// checkSummary compares the stored summary with one derived afresh from
// the runs (inside a read of q) and describes the difference, "" when
// there is none. Values compare exactly: both sides come from the same
// AVG over the same rows.
func checkSummary(ctx context.Context, q Querier) (string, error) {
	stored := "SELECT run_id, code, " + strings.Join(summaryColumns, ", ") + " FROM run_summary"
	fresh := freshSummary("IS NOT NULL")
	ex := freshExtra("IS NOT NULL")
	extra := "SELECT * FROM (" + ex[0] + " UNION ALL " + ex[1] + ") u"
	storedExtra := "SELECT name, run_id, value FROM run_summary_extra"
	var stale, missing, extraDiff int
	err := q.QueryRowContext(ctx, "SELECT "+
		"(SELECT COUNT(*) FROM ("+stored+" EXCEPT "+fresh+") a), "+
		"(SELECT COUNT(*) FROM ("+fresh+" EXCEPT "+stored+") b), "+
		"(SELECT COUNT(*) FROM ("+extra+" EXCEPT "+storedExtra+") c) + "+
		"(SELECT COUNT(*) FROM ("+storedExtra+" EXCEPT "+extra+") d)").Scan(&stale, &missing, &extraDiff)
	if err != nil {
		return "", fmt.Errorf("check the run summary: %w", err)
	}
	if stale+missing+extraDiff == 0 {
		return "", nil
	}
	return fmt.Sprintf("run summary: %d stored rows disagree with the runs, %d runs lack a right row, %d other values differ; rebuild it with foilrun db check --repair", stale, missing, extraDiff), nil
}

// derivedTable is a table derived from the runs that db check compares
// and db check --repair rebuilds.
type derivedTable struct {
	name    string
	rebuild func(ctx context.Context, tx execer, d Dialect) error
	check   func(ctx context.Context, q Querier) (string, error)
}

// derivedTables are every derived table, in the order they are rebuilt.
// A new derived table adds its entry here.
var derivedTables = []derivedTable{
	{name: "run summary", rebuild: rebuildSummary, check: checkSummary},
}

// checkDerived checks every derived table and returns the problems.
func checkDerived(ctx context.Context, q Querier) ([]string, error) {
	var probs []string
	for _, t := range derivedTables {
		p, err := t.check(ctx, q)
		if err != nil {
			return nil, err
		}
		if p != "" {
			probs = append(probs, p)
		}
	}
	return probs, nil
}

// Repair rebuilds every derived table from the runs in one transaction
// and returns what it rebuilt, each with the number of runs; see
// store.RunLog.
func (s *DB) Repair(ctx context.Context) ([]string, error) {
	done, err := s.repair(ctx)
	return done, s.refused("repair the run log", err)
}

func (s *DB) repair(ctx context.Context) ([]string, error) {
	if err := s.writable("repair"); err != nil {
		return nil, err
	}
	tx, err := s.db.BeginTx(ctx, nil)
	if err != nil {
		return nil, err
	}
	defer tx.Rollback()
	var runs int
	if err := tx.QueryRowContext(ctx, `SELECT COUNT(*) FROM runs`).Scan(&runs); err != nil {
		return nil, err
	}
	var done []string
	for _, t := range derivedTables {
		if err := t.rebuild(ctx, tx, s.d); err != nil {
			return nil, err
		}
		done = append(done, fmt.Sprintf("%s rebuilt from %d runs", t.name, runs))
	}
	return done, tx.Commit()
}
