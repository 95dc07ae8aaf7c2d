package engine

import (
	"fmt"
	"io"
	"sync"
	"sync/atomic"
	"time"
)

// progress shows how far a computation has come on one line of a terminal:
// cells (test × pair × group) done out of all, and the resampling draws
// (permutations, bootstrap resamples) made so far. It redraws at most a few
// times a second, and its methods are safe on a nil *progress, which shows
// nothing.
type progress struct {
	w        io.Writer
	cells    int
	done     atomic.Int64
	resample atomic.Int64
	every    time.Duration

	mu    sync.Mutex
	last  time.Time
	shown bool
}

// newProgress returns a progress line on w for a computation of cells
// cells, or nil when w is nil.
func newProgress(w io.Writer, cells int) *progress {
	if w == nil {
		return nil
	}
	return &progress{w: w, cells: cells, every: 200 * time.Millisecond}
}

// cellDone counts one finished cell.
func (p *progress) cellDone() {
	if p == nil {
		return
	}
	p.done.Add(1)
	p.redraw(false)
}

// draws returns the callback for one resampling call (a permutation test,
// a bootstrap interval). The kernel calls it from its workers with the draws
// done so far, possibly out of order; only growth is counted. It is nil for
// a nil *progress.
func (p *progress) draws() func(done, total int) {
	if p == nil {
		return nil
	}
	var last atomic.Int64
	return func(done, _ int) {
		for {
			l := last.Load()
			if int64(done) <= l {
				return
			}
			if last.CompareAndSwap(l, int64(done)) {
				p.resample.Add(int64(done) - l)
				break
			}
		}
		p.redraw(false)
	}
}

// redraw rewrites the line when enough time has passed, or always when
// final.
func (p *progress) redraw(final bool) {
	p.mu.Lock()
	defer p.mu.Unlock()
	now := time.Now()
	if !final && now.Sub(p.last) < p.every {
		return
	}
	p.last = now
	line := fmt.Sprintf("computing: %d of %d cells", p.done.Load(), p.cells)
	if d := p.resample.Load(); d > 0 {
		line += fmt.Sprintf(", %d permutation and bootstrap draws", d)
	}
	fmt.Fprintf(p.w, "\r%s\x1b[K", line)
	p.shown = true
}

// finish clears the line, so that what is printed next starts clean.
func (p *progress) finish() {
	if p == nil {
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.shown {
		fmt.Fprint(p.w, "\r\x1b[K")
	}
}
