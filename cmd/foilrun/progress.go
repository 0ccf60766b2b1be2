package main

import (
	"io"
	"time"

	"github.com/schollz/progressbar/v3"
)

// progress is the one progress bar of long work (window maps, fits, log
// copies). It draws on standard error only when that is a terminal; in a
// pipe it is nil and does nothing, so scripts and logs see no bar.
type progress struct {
	w    io.Writer
	what string
	bar  *progressbar.ProgressBar // made on the first update, when the total is known
}

// progress returns a bar described by what, or nil when stderr is not a
// terminal. Every method of a nil *progress does nothing.
func (s *streams) progress(what string) *progress {
	if !s.ErrTTY {
		return nil
	}
	return &progress{w: s.Err, what: what}
}

// update shows done of total steps.
func (p *progress) update(done, total int) {
	if p == nil {
		return
	}
	if p.bar == nil {
		p.bar = progressbar.NewOptions(total, progressbar.OptionSetWriter(p.w), progressbar.OptionSetDescription(p.what),
			progressbar.OptionShowCount(), progressbar.OptionThrottle(50*time.Millisecond), progressbar.OptionClearOnFinish())
	}
	if int64(total) != p.bar.GetMax64() {
		p.bar.ChangeMax(total)
	}
	_ = p.bar.Set(done)
}

// report is the callback a library takes, or nil without a bar (the
// libraries skip a nil callback).
func (p *progress) report() func(done, total int) {
	if p == nil {
		return nil
	}
	return p.update
}

// finish clears the bar.
func (p *progress) finish() {
	if p != nil && p.bar != nil {
		_ = p.bar.Finish()
	}
}
