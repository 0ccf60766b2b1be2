package storetest

import (
	"bytes"
	"context"
	"fmt"
	"sort"
	"testing"

	"github.com/foilrun/foilrun/store"
)

// Profiles checks a back end's store.ProfileStore and the profiles
// FitRuns passes: a profile is stored and replaced by recipe, furnace and
// version; FitRuns gives each run the profile of its recipe on its own
// furnace snapshot, or on the furnace asked for, of the version asked for,
// and nil where none is stored; ProfilePairs lists the runs' snapshot
// pairs and which have one; ReplaceProfiles drops the rest; profiles stay
// out of the Digest; an incomplete profile is ErrInvalid.
func Profiles(t *testing.T, open Opener) {
	ctx := context.Background()
	l := open(t)
	ps, ok := l.(store.ProfileStore)
	if !ok {
		t.Fatalf("%T does not implement store.ProfileStore", l)
	}
	fr := l.(store.FitReader)
	r1 := store.NewSnapshot("one", "one.yaml", []byte("name: one\n"))
	r2 := store.NewSnapshot("two", "two.yaml", []byte("name: two\n"))
	fa := store.NewFileSnapshot(store.SnapshotFurnace, "a", "a.yaml", []byte("name: a\n"))
	fb := store.NewFileSnapshot(store.SnapshotFurnace, "b", "b.yaml", []byte("name: b\n"))
	other := store.HashOf([]byte("a furnace file given with --furnace"))
	bundle := store.Bundle{Snapshots: []store.Snapshot{r1, r2, fa, fb}}
	pairs := []struct{ recipe, furnace string }{{r1.SHA256, fa.SHA256}, {r1.SHA256, fb.SHA256}, {r2.SHA256, fa.SHA256}, {r2.SHA256, ""}}
	for i := range 8 {
		rec := GenRecord(i, pairs[i%4].recipe)
		rec.Code = store.FormatCode("", T0, int64(i+1))
		rec.FurnaceHash = pairs[i%4].furnace
		rec.Outcomes = []store.Outcome{{Metric: "coverage", Value: 0.5, Unit: "1"}}
		bundle.Runs = append(bundle.Runs, rec)
	}
	if _, err := l.Import(ctx, bundle, nil); err != nil {
		t.Fatal(err)
	}
	before, err := l.Digest(ctx)
	if err != nil {
		t.Fatal(err)
	}
	data := func(recipe, furnace string, v int) []byte {
		return []byte(fmt.Sprintf("%.6s|%.6s|%d", recipe, furnace, v))
	}
	put := []store.Profile{
		{Recipe: r1.SHA256, Furnace: fa.SHA256, Version: 1, Data: []byte("old")},
		{Recipe: r1.SHA256, Furnace: fa.SHA256, Version: 1, Data: data(r1.SHA256, fa.SHA256, 1)}, // replaces the one before
		{Recipe: r1.SHA256, Furnace: fa.SHA256, Version: 2, Data: data(r1.SHA256, fa.SHA256, 2)},
		{Recipe: r2.SHA256, Furnace: fa.SHA256, Version: 2, Data: data(r2.SHA256, fa.SHA256, 2)},
		{Recipe: r2.SHA256, Furnace: other, Version: 2, Data: data(r2.SHA256, other, 2)},
	}
	for _, p := range put {
		if err := ps.PutProfiles(ctx, []store.Profile{p}); err != nil {
			t.Fatal(err)
		}
	}
	fitProfiles := func(t *testing.T, pk store.ProfileKey) []string {
		t.Helper()
		var got []string
		err := fr.FitRuns(ctx, store.Filter{}, []string{"coverage"}, pk, func(r store.RunRecord, prof []byte) error {
			got = append(got, string(prof))
			return nil
		})
		if err != nil {
			t.Fatal(err)
		}
		return got
	}
	for _, c := range []struct {
		name string
		pk   store.ProfileKey
		want func(recipe, furnace string) []byte
	}{
		{"version 1, own furnace", store.ProfileKey{Version: 1}, func(r, f string) []byte {
			if r == r1.SHA256 && f == fa.SHA256 {
				return data(r, f, 1)
			}
			return nil
		}},
		{"version 2, own furnace", store.ProfileKey{Version: 2}, func(r, f string) []byte {
			if f == fa.SHA256 {
				return data(r, f, 2)
			}
			return nil
		}},
		{"version 2, furnace given", store.ProfileKey{Version: 2, Furnace: other}, func(r, f string) []byte {
			if r == r2.SHA256 {
				return data(r, other, 2)
			}
			return nil
		}},
		{"version 3: none stored", store.ProfileKey{Version: 3}, func(string, string) []byte { return nil }},
	} {
		t.Run(c.name, func(t *testing.T) {
			got := fitProfiles(t, c.pk)
			if len(got) != len(bundle.Runs) {
				t.Fatalf("got %d runs, want %d", len(got), len(bundle.Runs))
			}
			for i, rec := range bundle.Runs {
				if w := string(c.want(rec.RecipeHash, rec.FurnaceHash)); got[i] != w {
					t.Errorf("run %s: got profile %q, want %q", rec.Code, got[i], w)
				}
			}
		})
	}
	t.Run("pairs", func(t *testing.T) {
		got, err := ps.ProfilePairs(ctx, 2)
		if err != nil {
			t.Fatal(err)
		}
		want := []store.SnapshotPair{{Recipe: r1.SHA256, Furnace: fa.SHA256, Stored: true}, {Recipe: r1.SHA256, Furnace: fb.SHA256}, {Recipe: r2.SHA256, Furnace: fa.SHA256, Stored: true}}
		sortPairs(want)
		if g, w := fmt.Sprint(got), fmt.Sprint(want); g != w {
			t.Errorf("got %s, want %s", g, w)
		}
	})
	t.Run("digest leaves profiles out", func(t *testing.T) {
		after, err := l.Digest(ctx)
		if err != nil {
			t.Fatal(err)
		}
		if g, w := fmt.Sprint(after), fmt.Sprint(before); g != w {
			t.Errorf("digest after storing profiles: got %s, want %s", g, w)
		}
	})
	t.Run("replace", func(t *testing.T) {
		fresh := store.Profile{Recipe: r1.SHA256, Furnace: fb.SHA256, Version: 2, Data: data(r1.SHA256, fb.SHA256, 2)}
		if err := ps.ReplaceProfiles(ctx, []store.Profile{fresh}); err != nil {
			t.Fatal(err)
		}
		got := fitProfiles(t, store.ProfileKey{Version: 2})
		for i, rec := range bundle.Runs {
			var w []byte
			if rec.RecipeHash == r1.SHA256 && rec.FurnaceHash == fb.SHA256 {
				w = fresh.Data
			}
			if !bytes.Equal([]byte(got[i]), w) {
				t.Errorf("run %s after replace: got profile %q, want %q", rec.Code, got[i], w)
			}
		}
	})
	t.Run("incomplete profile", func(t *testing.T) {
		for _, p := range []store.Profile{
			{Furnace: fa.SHA256, Version: 1, Data: []byte("x")},
			{Recipe: r1.SHA256, Version: 1, Data: []byte("x")},
			{Recipe: r1.SHA256, Furnace: fa.SHA256, Data: []byte("x")},
			{Recipe: r1.SHA256, Furnace: fa.SHA256, Version: 1},
		} {
			if err := ps.PutProfiles(ctx, []store.Profile{p}); !errorsIs(err, store.ErrInvalid) {
				t.Errorf("PutProfiles(%+v): got %v, want ErrInvalid", p, err)
			}
		}
	})
}

// sortPairs orders pairs by recipe, then furnace hash, as ProfilePairs does.
func sortPairs(ps []store.SnapshotPair) {
	sort.Slice(ps, func(i, j int) bool {
		return ps[i].Recipe < ps[j].Recipe || ps[i].Recipe == ps[j].Recipe && ps[i].Furnace < ps[j].Furnace
	})
}
