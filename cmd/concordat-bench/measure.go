package main

import (
	"bufio"
	"bytes"
	"context"
	"errors"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"time"
)

// timeBinary is GNU time, from Debian's time package; its -v report gives
// the peak resident set size of the command it runs.
const timeBinary = "/usr/bin/time"

// errTimeout is returned by runner.run when a command outlived its timeout.
var errTimeout = errors.New("timed out")

// runner runs one measured command at a time.
type runner struct {
	gnuTime bool          // measure through timeBinary; else from the child's rusage
	timeout time.Duration // per run; 0 for none
}

// sample is one measured run.
type sample struct {
	wall    time.Duration
	cpu     time.Duration // user + system time of the process and its waited-for children
	peakRSS int64         // bytes; 0 when unknown
	stdout  []byte
	stderr  []byte
}

// run runs argv in dir and measures its wall time (from just before the start
// to the end of the wait, on the monotonic clock) and its peak resident set
// size: GNU time's "Maximum resident set size" when r.gnuTime, else the
// child's own rusage (ru_maxrss, which on Linux also covers the descendants
// it waited for). The command runs in its own process group, and the whole
// group is killed when ctx ends or the timeout passes, so that neither time
// nor R can leave a child running.
//
// A command that exits non-zero is an error carrying the tail of its stderr;
// one that outlives the timeout is errTimeout.
func (r runner) run(ctx context.Context, dir string, argv []string) (sample, error) {
	if r.timeout > 0 {
		var cancel context.CancelFunc
		ctx, cancel = context.WithTimeout(ctx, r.timeout)
		defer cancel()
	}
	prog := filepath.Base(argv[0])
	var report string
	if r.gnuTime {
		f, err := os.CreateTemp("", "concordat-bench-time-*")
		if err != nil {
			return sample{}, err
		}
		report = f.Name()
		f.Close()
		defer os.Remove(report)
		argv = append([]string{timeBinary, "-v", "-o", report}, argv...)
	}
	cmd := exec.CommandContext(ctx, argv[0], argv[1:]...)
	cmd.Dir = dir
	var stdout, stderr bytes.Buffer
	cmd.Stdout, cmd.Stderr = &stdout, &stderr
	ownProcessGroup(cmd)
	cmd.WaitDelay = 5 * time.Second

	start := time.Now()
	err := cmd.Run()
	s := sample{wall: time.Since(start), stdout: stdout.Bytes(), stderr: stderr.Bytes()}
	if ctx.Err() != nil {
		if errors.Is(ctx.Err(), context.DeadlineExceeded) && r.timeout > 0 {
			return s, errTimeout
		}
		return s, ctx.Err()
	}
	if err != nil {
		return s, fmt.Errorf("%s: %w\n%s", prog, err, tail(stderr.Bytes(), 15))
	}
	if r.gnuTime {
		text, err := os.ReadFile(report)
		if err != nil {
			return s, err
		}
		s.peakRSS = parseMaxRSS(text)
	}
	if s.peakRSS == 0 {
		s.peakRSS = childMaxRSS(cmd.ProcessState)
	}
	// On Linux the rusage of a waited-for child includes its own waited-for
	// children, so this covers the command under GNU time.
	s.cpu = cmd.ProcessState.UserTime() + cmd.ProcessState.SystemTime()
	return s, nil
}

// parseMaxRSS reads the peak resident set size, in bytes, from the report of
// GNU time -v ("Maximum resident set size (kbytes): 123456"); 0 when absent.
func parseMaxRSS(report []byte) int64 {
	sc := bufio.NewScanner(bytes.NewReader(report))
	for sc.Scan() {
		line := strings.TrimSpace(sc.Text())
		rest, ok := strings.CutPrefix(line, "Maximum resident set size (kbytes):")
		if !ok {
			continue
		}
		kb, err := strconv.ParseInt(strings.TrimSpace(rest), 10, 64)
		if err != nil {
			return 0
		}
		return kb * 1024
	}
	return 0
}

// tail returns the last n lines of b, indented, for an error message.
func tail(b []byte, n int) string {
	lines := strings.Split(strings.TrimRight(string(b), "\n"), "\n")
	if len(lines) > n {
		lines = lines[len(lines)-n:]
	}
	return "    " + strings.Join(lines, "\n    ")
}

// median returns the median of v (the mean of the middle two for an even
// count); v is not modified. It panics on an empty slice.
func median[T ~int64 | ~float64](v []T) T {
	s := slices.Clone(v)
	slices.Sort(s)
	m := len(s) / 2
	if len(s)%2 == 1 {
		return s[m]
	}
	return (s[m-1] + s[m]) / 2
}

// computeSeconds reads the "compute_seconds S" line that each R script prints:
// R's own time between reading the data and writing the result.
func computeSeconds(stdout []byte) (float64, bool) {
	for _, line := range strings.Split(string(stdout), "\n") {
		if rest, ok := strings.CutPrefix(line, "compute_seconds "); ok {
			v, err := strconv.ParseFloat(strings.TrimSpace(rest), 64)
			return v, err == nil
		}
	}
	return 0, false
}

// inMemorySeconds reads concordat's `run --timings` line from its stderr
// ("… time: read 1.2 s (…), compute 0.8 s (…), tables 0.1 s (…), write …")
// and returns the compute phase: from the data in memory to every result
// (estimates, p-values, intervals, notes) in memory, the figure comparable
// to R's in-script time, which ends with its result table built and
// before fwrite. The tables phase (encoding the outputs, hashing every
// result for the ledger) counts with writing.
func inMemorySeconds(stderr []byte) (float64, bool) {
	for _, line := range strings.Split(string(stderr), "\n") {
		_, rest, ok := strings.Cut(line, " time: ")
		if !ok {
			continue
		}
		var sum float64
		found := 0
		for _, phase := range strings.Split(rest, ", ") {
			name, value, ok := strings.Cut(phase, " ")
			if !ok || name != "compute" {
				continue
			}
			num, _, _ := strings.Cut(value, " ")
			v, err := strconv.ParseFloat(num, 64)
			if err != nil {
				return 0, false
			}
			sum += v
			found++
		}
		return sum, found == 1
	}
	return 0, false
}
