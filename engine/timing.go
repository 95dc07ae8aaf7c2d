package engine

import (
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"
	"time"
)

// timings records how long the phases of a run took, for `run --timings`:
// on a large data set a researcher wants to know whether reading, computing
// or writing is what takes the time. Times go to the writer only, never
// into the ledger or any hashed content.
type timings struct {
	w      io.Writer // nil: nothing is recorded
	last   time.Time
	phases []string
}

func newTimings(w io.Writer) *timings {
	return &timings{w: w, last: time.Now()}
}

// lap closes the phase called name, which ran since the previous lap.
func (t *timings) lap(name string) {
	if t == nil || t.w == nil {
		return
	}
	now := time.Now()
	phase := fmt.Sprintf("%s %.3f s", name, now.Sub(t.last).Seconds())
	if peak, ok := peakMemory(); ok {
		phase += fmt.Sprintf(" (peak memory so far %d MiB)", peak>>20)
	}
	t.phases = append(t.phases, phase)
	t.last = now
}

// report writes the phases on one line.
func (t *timings) report(recipePath string) {
	if t == nil || t.w == nil || len(t.phases) == 0 {
		return
	}
	fmt.Fprintf(t.w, "concordat: %s: time: %s\n", recipePath, strings.Join(t.phases, ", "))
}

// peakMemory returns the process's peak resident memory in bytes, where the
// system tells (Linux: VmHWM in /proc/self/status).
func peakMemory() (int64, bool) {
	b, err := os.ReadFile("/proc/self/status")
	if err != nil {
		return 0, false
	}
	for line := range strings.Lines(string(b)) {
		if rest, ok := strings.CutPrefix(line, "VmHWM:"); ok {
			f := strings.Fields(rest)
			if len(f) != 2 || f[1] != "kB" {
				return 0, false
			}
			kb, err := strconv.ParseInt(f[0], 10, 64)
			return kb << 10, err == nil
		}
	}
	return 0, false
}
