package history

import (
	"errors"
	"fmt"
	"runtime"
	"runtime/debug"
	"strconv"
	"strings"
	"sync"
	"time"

	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/store"
)

// pending is a row read and checked, waiting for its recipe.
type pending struct {
	row   Row
	rec   store.RunRecord
	key   string // the furnace and the row's values: rows with one key share a recipe
	edits map[int][]recipe.StepEdit
	fu    Furnace
}

// read reads one sheet row, or returns its problems.
func (c *converter) read(row Row) (pending, []string) {
	var problems []string
	bad := func(col int, err error) {
		problems = append(problems, c.problem(row, col, err.Error()))
	}
	fu, err := c.rowFurnace(row)
	if err != nil {
		bad(c.furnace, err)
		return pending{}, problems
	}
	edits := map[int][]recipe.StepEdit{}
	key := []string{fu.Snapshot.SHA256}
	for _, f := range c.fields {
		text := cell(row, f.col)
		if text == "" {
			continue // the template's value stays
		}
		si, err := quantity(text, f.Column, f.dim, c.in.Map.Decimal)
		if err != nil {
			bad(f.col, err)
			continue
		}
		edits[f.step] = append(edits[f.step], recipe.StepEdit{Field: f.Field, Gas: f.Gas, SI: si})
		key = append(key, strconv.Itoa(f.step)+f.Field+f.Gas+"="+strconv.FormatFloat(si, 'g', -1, 64))
	}
	rec := store.RunRecord{Run: store.Run{Status: store.Done, RecipeName: c.tmpl.Name, Furnace: fu.Furnace.Name,
		FurnaceHash: fu.Snapshot.SHA256, Lot: c.tmpl.Substrate.Lot, Source: c.source(row)}}
	c.text(row, &rec, bad)
	rec.Outcomes = c.rowOutcomes(row, bad)
	return pending{row: row, rec: rec, key: strings.Join(key, "|"), edits: edits, fu: fu}, problems
}

// finish makes a read row a run with its built recipe.
func (c *converter) finish(p pending, b built) (Run, error) {
	if b.err != nil {
		return Run{}, fmt.Errorf("row %d: the template with this row's values: %v", p.row.N, b.err)
	}
	rec := p.rec
	rec.RecipeHash, rec.Params = b.snap.SHA256, b.params
	if !rec.Started.IsZero() {
		rec.Ended = rec.Started.Add(time.Duration(b.total * float64(time.Second)))
	}
	for i := range rec.Notes {
		rec.Notes[i].At = rec.Started
	}
	return Run{Record: rec, Recipe: b.snap, Furnace: p.fu.Snapshot, Findings: b.findings}, nil
}

// text reads the row's code, start, operator, lot and notes into rec.
func (c *converter) text(row Row, rec *store.RunRecord, bad func(int, error)) {
	if v := cell(row, c.code); v != "" {
		if err := store.ValidateCode(v); err != nil {
			bad(c.code, fmt.Errorf("run code '%s': %v", v, trimInvalid(err)))
		}
		rec.Code = v
	}
	if v := cell(row, c.started); v != "" {
		t, err := sheetDate(v, c.in.Map.DateOrder, c.in.Sheet.XLSX, c.in.Sheet.Date1904)
		if err != nil {
			bad(c.started, err)
		}
		rec.Started = t
	}
	rec.Operator = cell(row, c.operator)
	if v := cell(row, c.lot); v != "" {
		rec.Lot = v
	}
	for _, i := range c.notes {
		if v := cell(row, i); v != "" {
			rec.Notes = append(rec.Notes, store.Note{Text: v})
		}
	}
}

// rowOutcomes reads the row's measured outcomes; an empty cell is no
// measurement.
func (c *converter) rowOutcomes(row Row, bad func(int, error)) []store.Outcome {
	var out []store.Outcome
	for k, om := range c.in.Map.Outcomes {
		col := c.outcomes[k]
		text := cell(row, col)
		if text == "" {
			continue
		}
		text = cellText(text, c.in.Map.Decimal)
		if num, unit := recipe.SplitNumber(text); strings.TrimSpace(unit) == "" && om.Column.Unit != "" {
			text = num + " " + om.Column.Unit
		}
		o, err := store.ParseOutcome(om.Metric+"="+text, recipe.IsParameter)
		if err != nil {
			bad(col, trimInvalid(err))
			continue
		}
		o.Method = "history"
		out = append(out, o)
	}
	return out
}

// build returns the recipe the template becomes with the edits on the
// furnace. It only reads c, so several may run at once.
func (c *converter) build(edits map[int][]recipe.StepEdit, fu Furnace) built {
	var es []recipe.Edit
	for step, ch := range edits {
		es = append(es, recipe.Edit{Step: step, Changes: ch})
	}
	content, err := c.editor.Apply("", es)
	if err != nil {
		return built{err: err}
	}
	r, err := recipe.ParseRecipe(c.in.TemplateFile, content)
	if err != nil {
		return built{err: err}
	}
	plan := recipe.Derive(r, fu.Furnace)
	return built{snap: store.NewSnapshot(r.Name, c.in.TemplateFile, content), params: plan.Parameters(), total: plan.Total, findings: recipe.Check(plan)}
}

// buildAll builds the recipe of every distinct key among the rows, on
// all processors. The garbage collector runs less often meanwhile: each
// recipe is parsed, edited and written as short-lived YAML trees, and
// with the default target a 10,000-row sheet spends about a fifth of its
// time collecting them.
func (c *converter) buildAll(rows []pending) map[string]built {
	defer debug.SetGCPercent(debug.SetGCPercent(400))
	out := map[string]built{}
	var todo []pending
	for _, p := range rows {
		if _, ok := out[p.key]; !ok {
			out[p.key] = built{}
			todo = append(todo, p)
		}
	}
	res := make([]built, len(todo))
	var wg sync.WaitGroup
	next := make(chan int)
	for range runtime.GOMAXPROCS(0) {
		wg.Go(func() {
			for i := range next {
				res[i] = c.build(todo[i].edits, todo[i].fu)
			}
		})
	}
	for i := range todo {
		next <- i
	}
	close(next)
	wg.Wait()
	for i, p := range todo {
		out[p.key] = res[i]
	}
	return out
}

// rowFurnace is the furnace the row names, else the default.
func (c *converter) rowFurnace(row Row) (Furnace, error) {
	name := cell(row, c.furnace)
	def := c.in.Furnace
	if name == "" || name == def.Furnace.Name {
		return def, nil
	}
	if c.in.FurnaceByName == nil {
		return Furnace{}, fmt.Errorf("furnace '%s' is not known; give its file with --furnace, or leave the cell empty for %q", name, def.Furnace.Name)
	}
	fu, err := c.in.FurnaceByName(name)
	if err != nil {
		return Furnace{}, err
	}
	for _, sm := range c.in.Map.Steps {
		for _, f := range sm.Fields {
			if f.Field != recipe.EditFlow {
				continue
			}
			if err := c.gasLine(fu.Furnace, sm, f); err != nil {
				return Furnace{}, fmt.Errorf("furnace '%s': %v", name, trimInvalid(err))
			}
		}
	}
	return fu, nil
}

// source is the run's provenance: "runs.xlsx, sheet 2025, row 17".
func (c *converter) source(row Row) string {
	return fmt.Sprintf("%s, row %d", c.in.Sheet.label(), row.N)
}

// trimInvalid drops the trailing ": invalid input" of store's sentinel.
func trimInvalid(err error) error {
	s := err.Error()
	return errors.New(strings.TrimSuffix(s, ": "+store.ErrInvalid.Error()))
}
