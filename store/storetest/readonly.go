package storetest

import (
	"bytes"
	"context"
	"errors"
	"strings"
	"testing"

	"github.com/foilrun/foilrun/store"
)

// Populate logs a small log through w for the read-only tests: 20 full
// runs (every table gets rows), 10 of them on one recipe snapshot, and
// returns the codes.
func Populate(t *testing.T, w store.RunLog) []string {
	t.Helper()
	ctx := context.Background()
	sn := store.NewSnapshot("demo", "demo.yaml", TestRecipe)
	var codes []string
	for i := 0; i < 20; i++ {
		var snap *store.Snapshot
		if i%2 == 0 {
			snap = &sn
		}
		code, err := w.CreateRun(ctx, FullRecord(i, ""), snap)
		if err != nil {
			t.Fatalf("populate run %d: %v", i, err)
		}
		codes = append(codes, code)
	}
	return codes
}

// ReadOnly checks a log opened for reading only (r) against the same log
// opened for writing (w, populated by Populate): every read the read
// commands make (runs list, best and rank through Samples, export as JSON
// and CSV, run show, the snapshot fit rebuilds a plan from, names, check,
// schema version) gives what the writer's handle gives, and every write
// method fails with store.ErrReadOnly and changes nothing.
func ReadOnly(t *testing.T, w, r store.RunLog, codes []string) {
	ctx := context.Background()
	before := Fingerprint(t, w)
	t.Run("reads", func(t *testing.T) {
		runs, err := r.List(ctx, store.Filter{Where: []string{"growth_temperature_c >= 1000"}})
		want, werr := w.List(ctx, store.Filter{Where: []string{"growth_temperature_c >= 1000"}})
		if err != nil || werr != nil || len(runs) != len(want) || len(runs) == 0 {
			t.Errorf("runs list: got %d runs, %v; want %d, %v", len(runs), err, len(want), werr)
		}
		s, err := r.Samples(ctx, store.Filter{}, "coverage", []string{"growth_temperature_c"})
		if err != nil || len(s) != len(codes) {
			t.Errorf("runs best samples: got %d, %v; want %d", len(s), err, len(codes))
		}
		var a, b bytes.Buffer
		if _, err := store.WriteJSON(ctx, &a, r, store.Filter{}); err != nil {
			t.Errorf("runs export (json): %v", err)
		}
		if _, err := store.WriteJSON(ctx, &b, w, store.Filter{}); err != nil || a.String() != b.String() {
			t.Errorf("runs export (json) through the read-only log differs from the writer's (%v)", err)
		}
		a.Reset()
		if _, err := store.WriteCSV(ctx, &a, r, store.Filter{}); err != nil || !strings.HasPrefix(a.String(), "code,") {
			t.Errorf("runs export (csv): %v", err)
		}
		rec, err := r.Record(ctx, codes[0])
		if err != nil || len(rec.Notes) != 1 || len(rec.Attachments) != 1 {
			t.Errorf("run show: got %+v, %v", rec, err)
		}
		if sn, err := r.Snapshot(ctx, rec.RecipeHash); err != nil || !bytes.Equal(sn.Content, TestRecipe) {
			t.Errorf("snapshot for fit: %v", err)
		}
		if names, err := r.Names(ctx); err != nil || len(names) == 0 {
			t.Errorf("names: got %d, %v", len(names), err)
		}
		if probs, err := r.Check(ctx); err != nil || len(probs) != 0 {
			t.Errorf("db check: got %v, %v; want no problems", probs, err)
		}
		if v, err := r.SchemaVersion(ctx); err != nil || v != SchemaVersion {
			t.Errorf("schema version: got %d, %v; want %d", v, err, SchemaVersion)
		}
	})
	writes := []struct {
		name string
		call func() error
	}{
		{"run add", func() error { _, err := r.CreateRun(ctx, GenRecord(99, ""), nil); return err }},
		{"run note", func() error { return r.AddNote(ctx, codes[0], store.Note{Text: "x"}) }},
		{"run finish", func() error { return r.FinishRun(ctx, codes[1], store.Finish{Status: store.Done}) }},
		{"outcome add", func() error {
			return r.AddOutcomes(ctx, codes[0], []store.Outcome{{Metric: "coverage", Value: 0.5, Unit: "1"}})
		}},
		{"attachment", func() error {
			return r.AddAttachment(ctx, codes[0], store.Attachment{Path: "m.png", SHA256: hashAB, Kind: "micrograph"})
		}},
		{"runs import", func() error {
			_, err := r.Import(ctx, store.Bundle{Runs: []store.RunRecord{GenRecord(98, "")}}, nil)
			return err
		}},
		{"db copy --to", func() error { _, err := w.CopyTo(ctx, r, nil); return err }},
	}
	for _, tt := range writes {
		t.Run(tt.name, func(t *testing.T) {
			if err := tt.call(); !errors.Is(err, store.ErrReadOnly) {
				t.Errorf("write through the read-only log: got %v, want ErrReadOnly", err)
			}
		})
	}
	if Fingerprint(t, w) != before {
		t.Errorf("reads and refused writes through the read-only log changed it")
	}
}
