package storetest

import (
	"context"
	"errors"
	"fmt"
	"strings"
	"testing"

	"github.com/foilrun/foilrun/store"
)

// testBadInput: each bad call fails with a clear error and leaves the log
// exactly as it was.
func testBadInput(t *testing.T, open Opener) {
	l := open(t)
	ctx := context.Background()
	sn := store.NewSnapshot("demo", "demo.yaml", TestRecipe)
	code, err := l.CreateRun(ctx, GenRecord(1, sn.SHA256), &sn)
	must(t, err)
	before := Fingerprint(t, l)
	tests := []struct {
		name string
		call func() error
		is   error
		msg  string
	}{
		{"unknown code note", func() error { return l.AddNote(ctx, "G99-0001", store.Note{Text: "x"}) }, store.ErrNotFound, `run "G99-0001": not found`},
		{"unknown code finish", func() error { return l.FinishRun(ctx, "nope", store.Finish{Status: store.Done}) }, store.ErrNotFound, `run "nope"`},
		{"bad finish status", func() error { return l.FinishRun(ctx, code, store.Finish{Status: store.Running}) }, store.ErrInvalid, "want done or aborted"},
		{"unknown code show", func() error { _, err := l.Record(ctx, "G26-9999"); return err }, store.ErrNotFound, "not found"},
		{"wrong unit metric", func() error {
			return l.AddOutcomes(ctx, code, []store.Outcome{{Metric: "coverage", Value: 0.5, Unit: "1"}, {Metric: "domain_size", Value: 3, Unit: "ohm/sq"}})
		}, store.ErrInvalid, `domain_size is in um, not "ohm/sq"`},
		{"free metric unit change", func() error {
			return l.AddOutcomes(ctx, code, []store.Outcome{{Metric: "peak_shift", Value: 2, Unit: "cm-1"}, {Metric: "peak_shift", Value: 2, Unit: "nm"}})
		}, store.ErrInvalid, `metric "peak_shift" is logged in "cm-1", not "nm"`},
		{"metric named like a parameter", func() error {
			return l.AddOutcomes(ctx, code, []store.Outcome{{Metric: "growth_time_min", Value: 2, Unit: "1"}})
		}, store.ErrInvalid, `"growth_time_min" is a recipe parameter`},
		{"where syntax", func() error { _, err := l.List(ctx, store.Filter{Where: []string{"coverage >> 1"}}); return err }, store.ErrInvalid, "col 11"},
		{"1500 where flags", func() error {
			where := make([]string, 1500)
			for i := range where {
				where[i] = "coverage > 0"
			}
			_, err := l.List(ctx, store.Filter{Where: where})
			return err
		}, store.ErrInvalid, "more than 100 comparisons in the 1500 expressions given"},
		{"injection", func() error {
			_, err := l.List(ctx, store.Filter{Where: []string{`x'; DROP TABLE runs; --`}})
			return err
		}, store.ErrInvalid, "string starting with ' is not closed"},
		{"injection in name position", func() error {
			_, err := l.Samples(ctx, store.Filter{Where: []string{`status = "done" or 1=1; DROP TABLE runs`}}, "coverage", nil)
			return err
		}, store.ErrInvalid, "col 23: unexpected character ';'"},
		{"injection in a string value", func() error {
			runs, err := l.List(ctx, store.Filter{Where: []string{`furnace = "x'; DROP TABLE runs; --"`}})
			if err == nil && len(runs) != 0 {
				return fmt.Errorf("%d runs match", len(runs))
			}
			return fmt.Errorf("no match: %w", store.ErrNotFound)
		}, store.ErrNotFound, "no match"},
		{"duplicate code import", func() error {
			_, err := l.Import(ctx, store.Bundle{Runs: []store.RunRecord{GenRecord(2, ""), {Run: store.Run{Code: code, Status: store.Done}}}}, nil)
			return err
		}, store.ErrConflict, `run code "` + code + `" is already in the log`},
		{"duplicate code within an import", func() error {
			a := GenRecord(2, "")
			a.Code = "G20-0005"
			_, err := l.Import(ctx, store.Bundle{Runs: []store.RunRecord{a, a}}, nil)
			return err
		}, store.ErrConflict, `run code "G20-0005" is already in the log`},
		{"missing snapshot import", func() error {
			_, err := l.Import(ctx, store.Bundle{Runs: []store.RunRecord{GenRecord(3, store.HashOf([]byte("absent")))}}, nil)
			return err
		}, store.ErrInvalid, "neither given nor in the log"},
		{"bad status import", func() error {
			bad := GenRecord(3, "")
			bad.Status = "cooking"
			_, err := l.Import(ctx, store.Bundle{Runs: []store.RunRecord{GenRecord(4, ""), bad}}, nil)
			return err
		}, store.ErrInvalid, `status: "cooking": want planned, running, done or aborted`},
		{"tampered snapshot", func() error {
			bad := sn
			bad.Content = append([]byte(nil), sn.Content...)
			bad.Content[0] ^= 1
			bad.SHA256 = store.HashOf([]byte("other"))
			_, err := l.CreateRun(ctx, store.RunRecord{}, &bad)
			return err
		}, store.ErrInvalid, "content hashes to"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			err := tt.call()
			if !errors.Is(err, tt.is) || !strings.Contains(err.Error(), tt.msg) {
				t.Errorf("got %v, want %v containing %q", err, tt.is, tt.msg)
			}
			if after := Fingerprint(t, l); after != before {
				t.Errorf("the log changed")
			}
		})
	}
	if n := Count(t, l, "runs"); n != 1 {
		t.Errorf("runs table after injection attempts: got %d runs, want 1", n)
	}
}
