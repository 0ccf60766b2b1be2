package lab

import (
	"context"
	"encoding/binary"
	"errors"
	"fmt"
	"math"

	"github.com/foilrun/foilrun/kinetics"
	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/store"
)

// ProfileVersion is the derivation version of stored profiles. Bump it
// whenever the plan's derivation (recipe.Derive), the model's profile
// (kinetics.NewProfile) or the encoding below changes what a stored
// profile holds: profiles of another version are then derived again on
// demand (and stored by the next write or db check --repair).
const ProfileVersion = 1

// profileMagic opens every encoded profile.
const profileMagic = "FRP1"

// StoredProfile is what a fit needs of a plan: the model's profile of it
// reduced to the steps the model integrates (CarbonProfile) and the number
// of steps of the plan, which decides whether a run's furnace-log actuals
// give it logged conditions (StepConditions).
type StoredProfile struct {
	Profile kinetics.Profile
	Steps   int
}

// CarbonProfile returns the model's profile of the plan with only its
// carbon-bearing segments (methane flows), which are all that
// kinetics.Prepare integrates, so a fit on it gives results identical to
// one on the full profile. When a step without methane is one the model
// refuses (kinetics.PredictProfile's checks), every segment is kept, so
// Prepare refuses the profile with the same error as before.
func CarbonProfile(plan *recipe.Plan) StoredProfile {
	full := kinetics.NewProfile(plan)
	sp := StoredProfile{Profile: kinetics.Profile{Recipe: full.Recipe, Total: full.Total}, Steps: len(plan.Steps)}
	var rest []kinetics.Segment
	for _, s := range full.Segments {
		if s.Carbon() {
			sp.Profile.Segments = append(sp.Profile.Segments, s)
		} else {
			rest = append(rest, s)
		}
	}
	check := kinetics.Options{Panels: 1, RampStep: math.Inf(1)}
	if _, err := kinetics.PredictProfile(kinetics.Profile{Segments: rest}, kinetics.DefaultParams(), check); err != nil {
		sp.Profile.Segments = full.Segments
	}
	return sp
}

// Encode returns the profile's bytes: profileMagic, then unsigned
// varints and little-endian IEEE 754 float64 bits (exact, so a decoded
// profile fits as the derived one did): the plan's step count, the recipe
// name, the total time, the segment count and per segment its index,
// label, kind, start, duration, T0, T1, pC, pH and other carbon.
func (sp StoredProfile) Encode() []byte {
	b := []byte(profileMagic)
	b = binary.AppendUvarint(b, uint64(sp.Steps))
	b = appendString(b, sp.Profile.Recipe)
	b = binary.LittleEndian.AppendUint64(b, math.Float64bits(sp.Profile.Total))
	b = binary.AppendUvarint(b, uint64(len(sp.Profile.Segments)))
	for _, s := range sp.Profile.Segments {
		b = binary.AppendUvarint(b, uint64(s.Index))
		b = appendString(b, s.Label)
		b = appendString(b, string(s.Kind))
		for _, v := range []float64{s.Start, s.Duration, s.T0, s.T1, s.PC, s.PH, s.OtherCarbon} {
			b = binary.LittleEndian.AppendUint64(b, math.Float64bits(v))
		}
	}
	return b
}

func appendString(b []byte, s string) []byte {
	return append(binary.AppendUvarint(b, uint64(len(s))), s...)
}

// errProfile is a stored profile that does not decode.
var errProfile = errors.New("stored profile does not decode")

// DecodeProfile reads bytes made by Encode. Bytes that are not such an
// encoding (truncated, trailing bytes, a count beyond the data) are an
// error; it never panics.
func DecodeProfile(data []byte) (StoredProfile, error) {
	d := decoder{b: data}
	if len(data) < len(profileMagic) || string(data[:len(profileMagic)]) != profileMagic {
		return StoredProfile{}, fmt.Errorf("%w: no %q header", errProfile, profileMagic)
	}
	d.b = d.b[len(profileMagic):]
	var sp StoredProfile
	sp.Steps = d.int()
	sp.Profile.Recipe = d.string()
	sp.Profile.Total = d.float()
	n := d.int()
	// Each segment takes at least 3 + 7·8 bytes: a bound on n before
	// allocating.
	if d.err == nil && n > len(d.b)/59 {
		d.err = fmt.Errorf("%w: %d segments in %d bytes", errProfile, n, len(d.b))
	}
	for i := 0; i < n && d.err == nil; i++ {
		s := kinetics.Segment{Index: d.int(), Label: d.string(), Kind: recipe.StepKind(d.string())}
		for _, v := range []*float64{&s.Start, &s.Duration, &s.T0, &s.T1, &s.PC, &s.PH, &s.OtherCarbon} {
			*v = d.float()
		}
		sp.Profile.Segments = append(sp.Profile.Segments, s)
	}
	if d.err == nil && len(d.b) > 0 {
		d.err = fmt.Errorf("%w: %d bytes after the last segment", errProfile, len(d.b))
	}
	if d.err != nil {
		return StoredProfile{}, d.err
	}
	return sp, nil
}

// decoder reads Encode's fields, keeping the first error.
type decoder struct {
	b   []byte
	err error
}

func (d *decoder) int() int {
	if d.err != nil {
		return 0
	}
	v, n := binary.Uvarint(d.b)
	if n <= 0 || v > math.MaxInt32 {
		d.err = fmt.Errorf("%w: bad count", errProfile)
		return 0
	}
	d.b = d.b[n:]
	return int(v)
}

func (d *decoder) string() string {
	n := d.int()
	if d.err == nil && n > len(d.b) {
		d.err = fmt.Errorf("%w: a text of %d bytes in %d", errProfile, n, len(d.b))
	}
	if d.err != nil {
		return ""
	}
	s := string(d.b[:n])
	d.b = d.b[n:]
	return s
}

func (d *decoder) float() float64 {
	if d.err == nil && len(d.b) < 8 {
		d.err = fmt.Errorf("%w: truncated", errProfile)
	}
	if d.err != nil {
		return 0
	}
	v := math.Float64frombits(binary.LittleEndian.Uint64(d.b))
	d.b = d.b[8:]
	return v
}

// PlanProfile is the store.Profile of a plan derived from the recipe
// snapshot with hash recipeHash on the plan's furnace (keyed by the hash
// of the furnace file's bytes).
func PlanProfile(recipeHash string, plan *recipe.Plan) store.Profile {
	return store.Profile{Recipe: recipeHash, Furnace: store.HashOf(plan.Furnace.Content), Version: ProfileVersion, Data: CarbonProfile(plan).Encode()}
}

// StoreProfile stores the profile of a new run's plan (recipe snapshot
// hash recipeHash) when the log keeps profiles (store.ProfileStore).
func StoreProfile(ctx context.Context, l store.RunLog, recipeHash string, plan *recipe.Plan) error {
	ps, ok := l.(store.ProfileStore)
	if !ok || recipeHash == "" || plan.Furnace == nil || len(plan.Furnace.Content) == 0 {
		return nil
	}
	return ps.PutProfiles(ctx, []store.Profile{PlanProfile(recipeHash, plan)})
}

// FillProfiles derives and stores the profiles of this ProfileVersion
// that the log lacks for the recipe and furnace snapshot pairs of its
// runs (all of them with rebuild: db check --repair, which also drops
// every other stored profile). It returns how many it stored and the
// pairs it could not derive (a snapshot that no longer parses), as
// "recipe 0123456789ab on furnace 0123456789ab: why"; those runs' fits
// report the error. A log without profiles does nothing.
func FillProfiles(ctx context.Context, l store.RunLog, rebuild bool) (int, []string, error) {
	ps, ok := l.(store.ProfileStore)
	if !ok {
		return 0, nil, nil
	}
	pairs, err := ps.ProfilePairs(ctx, ProfileVersion)
	if err != nil {
		return 0, nil, err
	}
	b, err := NewRebuilder(l, "")
	if err != nil {
		return 0, nil, err
	}
	var out []store.Profile
	var failed []string
	for _, p := range pairs {
		if p.Stored && !rebuild {
			continue
		}
		rb, err := b.Rebuild(ctx, store.RunRecord{Run: store.Run{Code: "of recipe " + short(p.Recipe), RecipeHash: p.Recipe, FurnaceHash: p.Furnace}})
		if err != nil {
			failed = append(failed, fmt.Sprintf("recipe %s on furnace %s: %v", short(p.Recipe), short(p.Furnace), err))
			continue
		}
		out = append(out, store.Profile{Recipe: p.Recipe, Furnace: p.Furnace, Version: ProfileVersion, Data: CarbonProfile(rb.Plan).Encode()})
	}
	if rebuild {
		err = ps.ReplaceProfiles(ctx, out)
	} else {
		err = ps.PutProfiles(ctx, out)
	}
	if err != nil {
		return 0, failed, err
	}
	return len(out), failed, nil
}

func short(hash string) string { return fmt.Sprintf("%.12s", hash) }
