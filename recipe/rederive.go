package recipe

import "slices"

// Prefix is the first steps of a derived and checked plan, kept so that
// recipes differing from its recipe only from step K on (a process window
// varies the grow step) can be derived and checked without redoing those
// steps. Derive and Check on a Prefix give exactly what Derive and Check
// give on the whole recipe (the same float64 values, the same findings in
// the same order); the steps before K are copied, not recomputed.
//
// What the steps before K leave for the rest, and why nothing else is
// needed:
//
//   - Derive: step i reads the temperature and time step i−1 ends at, the
//     valve state (open to the pump, the held set-point and the step that
//     set it) the steps before it leave, and the pressure of step i−1.
//     Nothing reads a later step. Prefix keeps the end temperature, the
//     time and the valve state after step K−1; the pressure of step K−1 is
//     in its copied plan.
//   - Check: the checks of one step i (temperature and ramps, flows,
//     pressure, copper loss, growth) read step i's plan, step i−1's end
//     temperature (sequence.missing-ramp), the label of the step whose
//     set-point step i carries (at or before i), the recipe's substrate and
//     the furnace. For i < K none of them changes, so Prefix keeps their
//     findings and the steps near copper's melting point. The checks that
//     read the whole plan, the copper-melting summary and the sequence
//     (leak check, purge, vent, the last step), run again every time.
//
// A Prefix is read-only once made and may be used from many goroutines.
type Prefix struct {
	base  *Plan
	k     int
	state deriveState // before step k
	fs    []Finding   // of the checks of steps before k, in the order Check makes them
	errs  []Finding   // the errors among fs, in order
	melt  [2][]int    // steps before k too near copper's melting point: [0] warning, [1] error
}

// NewPrefix keeps steps 0 … k−1 of a plan made by Derive (with the Site
// the later plans are checked against set on it, or nil), for recipes that
// change only steps k and later. It panics if k is outside 0 … len(Steps).
func NewPrefix(base *Plan, k int) *Prefix {
	if k < 0 || k > len(base.Steps) {
		panic("recipe: NewPrefix: step index out of range")
	}
	px := &Prefix{base: base, k: k, state: startState(base.Recipe)}
	for i := range k {
		px.state.v.step(&base.Recipe.Steps[i], i)
	}
	if k > 0 {
		last := base.Steps[k-1]
		px.state.T, px.state.t = last.T1, last.Start+last.Duration
	}
	c := &checker{p: base, f: base.Furnace}
	c.steps(0, k)
	px.fs = c.fs
	for _, fd := range c.fs {
		if fd.Severity == Error {
			px.errs = append(px.errs, fd)
		}
	}
	for sev, sps := range c.melt {
		for _, sp := range sps {
			px.melt[sev] = append(px.melt[sev], sp.Index)
		}
	}
	return px
}

// Step is the index K of the first step a Prefix re-derives.
func (px *Prefix) Step() int { return px.k }

// Derive lays recipe r out on the prefix's furnace as Derive(r, furnace)
// would: the plans of steps before K are copied from the prefix (their
// Step fields point into r, their Flows are shared with the prefix's
// plan and must not be written), steps K… are derived. The plan's Site
// is the prefix plan's. r must have as many steps as the prefix's recipe
// and be equal to it in every field Derive reads except in steps K and
// later; Derive panics if the step counts differ.
func (px *Prefix) Derive(r *Recipe) *Plan {
	p := px.plan(r, "Prefix.Derive")
	p.deriveFrom(px.k, px.state)
	return p
}

// plan is a new plan of r with the prefix's steps copied (see fill).
func (px *Prefix) plan(r *Recipe, caller string) *Plan {
	p := &Plan{}
	px.fill(p, r, caller)
	return p
}

// fill makes p a plan of r with the prefix's steps copied, pointing into
// r, reusing p's Steps; the steps from K on are left for the caller to
// set. It panics, naming the caller, if r has a different number of steps.
func (px *Prefix) fill(p *Plan, r *Recipe, caller string) {
	n := len(r.Steps)
	if n != len(px.base.Steps) {
		panic("recipe: " + caller + ": the recipe has a different number of steps")
	}
	steps := p.Steps
	if cap(steps) < n {
		steps = make([]StepPlan, n)
	}
	*p = Plan{Recipe: r, Furnace: px.base.Furnace, Site: px.base.Site, Steps: steps[:n]}
	copy(p.Steps, px.base.Steps[:px.k])
	for i := range px.k {
		p.Steps[i].Step = &r.Steps[i]
	}
}

// Check returns what Check(p) returns for a plan made by px.Derive: the
// kept findings of the steps before K, the checks of steps K… run on p,
// then the checks of the whole plan, sorted as Check sorts them.
func (px *Prefix) Check(p *Plan) []Finding {
	c := &checker{}
	px.reset(c, p, false)
	c.steps(px.k, len(p.Steps))
	return c.finish()
}

// reset makes c a checker of plan p that holds the kept findings of the
// steps before K (only the errors among them when errorsOnly), reusing
// c's buffers.
func (px *Prefix) reset(c *checker, p *Plan, errorsOnly bool) {
	kept := px.fs
	if errorsOnly {
		kept = px.errs
	}
	*c = checker{p: p, f: p.Furnace, errorsOnly: errorsOnly, fs: append(c.fs[:0], kept...),
		melt: [2][]*StepPlan{c.melt[0][:0], c.melt[1][:0]}}
	for sev, idx := range px.melt {
		for _, i := range idx {
			c.melt[sev] = append(c.melt[sev], &p.Steps[i])
		}
	}
}

// Deriver derives and checks recipes that differ from a Prefix's recipe
// only in step K (a window's grow step), and remembers the steps after K:
// a step after K whose inputs are the same as at an earlier call gets the
// plan and findings it got then instead of being derived and checked
// again. The inputs of step i are, by deriveStep and the checks of one
// step (see Prefix): the recipe's step i (unchanged), the temperature and
// valve state the steps before leave, and the pressure of step i−1 for the
// kinds readsPrevPressure names; the start time only shifts Start. The
// checks of the whole plan run every time. A Deriver is not safe for
// concurrent use: make one per goroutine.
type Deriver struct {
	px   *Prefix
	memo map[stepKey]*stepMemo
	// errorsOnly: the checks keep only their errors (NewErrorDeriver).
	errorsOnly bool
	// plan and c are reused from call to call; flows is step K's Flows.
	plan  Plan
	c     checker
	flows []FlowPlan
}

// stepKey is what the plan and the one-step findings of a step after K
// depend on.
type stepKey struct {
	i     int
	T     float64 // K the step starts at
	v     valve   // before the step
	prevP float64 // Pa; 0 where the kind does not read it
}

// stepMemo is a remembered step: its plan (Start and Step are set again
// on use), the valve state after it, its findings and whether it is near
// copper's melting point ([0] warning, [1] error).
type stepMemo struct {
	plan StepPlan
	v    valve
	fs   []Finding
	melt [2]bool
}

// maxMemo bounds a Deriver's memory: past this many remembered steps it
// forgets them all and starts again.
const maxMemo = 1 << 14

// NewDeriver returns a Deriver over the prefix whose DeriveCheck gives
// every finding Check gives.
func (px *Prefix) NewDeriver() *Deriver {
	return &Deriver{px: px, memo: make(map[stepKey]*stepMemo)}
}

// NewErrorDeriver returns a Deriver over the prefix whose DeriveCheck
// gives only the errors among the findings Check gives, in Check's order:
// what decides whether a recipe is feasible, without writing out the
// notes and warnings.
func (px *Prefix) NewErrorDeriver() *Deriver {
	d := px.NewDeriver()
	d.errorsOnly = true
	return d
}

// DeriveCheck returns what Derive(r, furnace) and then Check give (only
// the errors for a NewErrorDeriver), with the plan's Site the prefix
// plan's. r must equal the prefix's recipe except in step K; it panics if
// the step counts differ. The plan and the findings are the Deriver's
// own, written again by the next call: copy what must outlive it. The
// plans of the steps before K and of remembered steps share their Flows
// with other plans: they must not be written.
func (d *Deriver) DeriveCheck(r *Recipe) (*Plan, []Finding) {
	px, p, c := d.px, &d.plan, &d.c
	px.fill(p, r, "Deriver.DeriveCheck")
	px.reset(c, p, d.errorsOnly)
	st := px.state
	p.deriveStep(px.k, &st, d.flows)
	d.flows = p.Steps[px.k].Flows
	c.steps(px.k, px.k+1)
	for i := px.k + 1; i < len(p.Steps); i++ {
		d.step(c, i, &st)
	}
	p.Total = st.t
	return p, c.finish()
}

// step derives and checks step i after K from the state st, or takes it
// from the memo.
func (d *Deriver) step(c *checker, i int, st *deriveState) {
	p := c.p
	key := stepKey{i: i, T: st.T, v: st.v}
	if readsPrevPressure(p.Recipe.Steps[i].Kind) {
		key.prevP = p.prevPressure(i)
	}
	if m, ok := d.memo[key]; ok {
		sp := &p.Steps[i]
		*sp = m.plan
		sp.Start, sp.Step = st.t, &p.Recipe.Steps[i]
		st.T, st.t, st.v = sp.T1, st.t+sp.Duration, m.v
		c.fs = append(c.fs, m.fs...)
		for sev, near := range m.melt {
			if near {
				c.melt[sev] = append(c.melt[sev], sp)
			}
		}
		return
	}
	nfs, nmelt := len(c.fs), [2]int{len(c.melt[0]), len(c.melt[1])}
	p.deriveStep(i, st, nil)
	c.steps(i, i+1)
	if len(d.memo) >= maxMemo {
		clear(d.memo)
	}
	d.memo[key] = &stepMemo{plan: p.Steps[i], v: st.v, fs: slices.Clone(c.fs[nfs:]),
		melt: [2]bool{len(c.melt[0]) > nmelt[0], len(c.melt[1]) > nmelt[1]}}
}
