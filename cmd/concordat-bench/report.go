package main

import (
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"os"
	"slices"
	"strconv"
	"strings"
	"time"
)

// series is the measured runs of one command on one item.
type series struct {
	wall     []float64 // seconds, one per completed run
	peak     []int64   // bytes, one per completed run
	compute  []float64 // time from the data in memory to the results in memory, seconds (concordat: --timings' compute phase; R: its in-script time)
	timedOut bool
	failed   bool
}

func (s *series) add(x sample) {
	s.wall = append(s.wall, x.wall.Seconds())
	s.peak = append(s.peak, x.peakRSS)
}

// row is one line of the report.
type row struct {
	item      item
	data      dataSet
	parquet   bool // concordat read the Parquet file
	bytes     int64
	concordat series
	r         series
	rSkipped  string // why R did not run; "" when it did
	agree     string // how closely the two tools' numbers agree
}

// timeCell is the median wall time, or the timeout.
func (s series) timeCell(timeout time.Duration) string {
	switch {
	case len(s.wall) > 0:
		return fmtSeconds(median(s.wall))
	case s.timedOut:
		return "> " + timeout.String() + " (timed out)"
	case s.failed:
		return "failed"
	}
	return "—"
}

// peakCell is the largest peak RSS over the runs (it varies little).
func (s series) peakCell() string {
	if len(s.peak) == 0 || slices.Max(s.peak) == 0 {
		return "—"
	}
	return fmtBytes(slices.Max(s.peak))
}

// writeReport prints the report: where it was measured, then the Markdown
// table, then notes.
func writeReport(w io.Writer, m machine, rows []row) {
	fmt.Fprintf(w, "\n### concordat-bench, %s\n\n", time.Now().UTC().Format("2006-01-02"))
	fmt.Fprintf(w, "Machine: %s", m.cpu)
	if m.memory != "" {
		fmt.Fprintf(w, ", %s of memory", m.memory)
	}
	fmt.Fprintf(w, "; %s (driver), %s; R: %s.\n", m.goVersion, orDash(m.concordat), m.r)
	if m.loadBefore != "" {
		fmt.Fprintf(w, "Load average (1 min) %s before, %s after: on a shared machine, figures measured under load are slower.\n", m.loadBefore, m.loadAfter)
	}
	fmt.Fprintf(w, "Sizes: %s; median of %s; wall time of the whole process (start to exit) for both tools; timeout %s per run.\n\n", m.sizes, plural(m.runs, "run"), m.timeout)

	fmt.Fprintln(w, "| work item | rows × columns | concordat | in memory | peak RSS | R | R in memory | R peak RSS | R ÷ concordat | in memory: R ÷ concordat | agreement | target (issue 4) |")
	fmt.Fprintln(w, "|---|---|---:|---:|---:|---:|---:|---:|---:|---:|---|---|")
	csvForR := false
	for _, rw := range rows {
		what := rw.item.what
		if rw.item.format == "" {
			what += ", from " + map[bool]string{false: "CSV", true: "Parquet"}[rw.parquet]
		}
		if rw.parquet {
			csvForR = true
		}
		shape := fmt.Sprintf("%s × %s", group(rw.data.rows), group(rw.data.cols))
		if rw.bytes > 0 {
			shape += fmt.Sprintf(", %s", fmtMB(rw.bytes))
		}
		rTime, rPeak, ratio, rMem, memRatio, cMem := "—", "—", "—", "—", "—", "—"
		if len(rw.concordat.compute) > 0 {
			cMem = fmtSeconds(median(rw.concordat.compute))
		}
		if rw.rSkipped != "" {
			rTime = rw.rSkipped
		} else {
			rTime, rPeak = rw.r.timeCell(m.timeout), rw.r.peakCell()
			if len(rw.r.compute) > 0 {
				rMem = fmtSeconds(median(rw.r.compute))
			}
			if len(rw.r.wall) > 0 && len(rw.concordat.wall) > 0 {
				ratio = fmt.Sprintf("%.2f×", median(rw.r.wall)/median(rw.concordat.wall))
			}
			if len(rw.r.compute) > 0 && len(rw.concordat.compute) > 0 && median(rw.concordat.compute) > 0 {
				memRatio = fmt.Sprintf("%.2f×", median(rw.r.compute)/median(rw.concordat.compute))
			}
		}
		fmt.Fprintf(w, "| `%s`: %s | %s | %s | %s | %s | %s | %s | %s | %s | %s | %s | %s |\n",
			rw.item.name, what, shape, rw.concordat.timeCell(m.timeout), cMem, rw.concordat.peakCell(),
			rTime, rMem, rPeak, ratio, memRatio, orDash(rw.agree), rw.item.target)
	}
	fmt.Fprintln(w)
	notes := slices.Clone(m.notes)
	notes = append(notes,
		"R ÷ concordat > 1 means concordat is faster. \"in memory\" is the time from the data in memory to every result in memory: for concordat the compute phase of `run --timings` (estimates, p-values, intervals and notes), for R its in-script time (estimates and p-values, up to its result table and before fwrite); these are the figures comparable to the issue's in-memory references. concordat's tables phase (encoding every output, hashing every result for the ledger) counts with writing, as R's fwrite does.",
		"agreement: the largest |difference| of the estimates between the two tools' output files, and the largest relative difference of the p-values (asymptotic items only; a permutation p-value differs by sampling).",
		"R: data.table::fread on every core, cor.test / cor for Spearman, pcaPP::cor.fk and the tie-corrected normal p for Kendall (R's cor is O(n²) for Kendall); each script writes its result with fwrite, as concordat writes a CSV table.")
	if csvForR {
		notes = append(notes, "Where concordat reads Parquet, R reads the CSV of the same numbers (R has no Parquet reader here).")
	}
	for _, n := range notes {
		fmt.Fprintf(w, "- %s\n", n)
	}
}

// compareResults reads concordat's result table and R's reference.csv and
// says how far apart their estimates (and, with withP, p-values) are, over
// the pairs both hold. Pairs are matched without regard to order.
func compareResults(ours, ref string, withP bool) string {
	a, err := readEstimates(ours, "estimate", "p_value")
	if err != nil {
		return "not compared: " + err.Error()
	}
	b, err := readEstimates(ref, "estimate", "p_value")
	if err != nil {
		return "not compared: " + err.Error()
	}
	var dEst, dP float64
	matched, pCompared := 0, 0
	for k, u := range a {
		v, ok := b[k]
		if !ok {
			continue
		}
		matched++
		dEst = max(dEst, math.Abs(u[0]-v[0]))
		// Below ~1e-290 one side may print its floor and the other 0.
		if withP && u[1] > 1e-290 && v[1] > 1e-290 {
			pCompared++
			dP = max(dP, math.Abs(u[1]-v[1])/max(u[1], v[1]))
		}
	}
	if matched == 0 || matched != len(a) || matched != len(b) {
		return fmt.Sprintf("pairs differ: concordat %d, R %d, common %d", len(a), len(b), matched)
	}
	s := fmt.Sprintf("Δ est %.1g", dEst)
	if pCompared > 0 {
		s += fmt.Sprintf(", rel. Δ p %.1g", dP)
	}
	return s
}

// pairKey names a pair without regard to order.
type pairKey struct{ a, b string }

func newPairKey(x, y string) pairKey {
	if y < x {
		x, y = y, x
	}
	return pairKey{x, y}
}

// readEstimates reads a CSV with columns x, y and the two named value
// columns; an empty or NA value reads as NaN.
func readEstimates(path string, est, p string) (map[pairKey][2]float64, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	r := csv.NewReader(f)
	r.ReuseRecord = true
	head, err := r.Read()
	if err != nil {
		return nil, fmt.Errorf("read %s: %w", path, err)
	}
	idx := map[string]int{}
	for i, h := range head {
		idx[h] = i
	}
	var cols [4]int
	for i, name := range []string{"x", "y", est, p} {
		j, ok := idx[name]
		if !ok {
			return nil, fmt.Errorf("%s has no column %q", path, name)
		}
		cols[i] = j
	}
	num := func(s string) float64 {
		v, err := strconv.ParseFloat(s, 64)
		if err != nil {
			return math.NaN()
		}
		return v
	}
	out := map[pairKey][2]float64{}
	for {
		rec, err := r.Read()
		if err == io.EOF {
			return out, nil
		}
		if err != nil {
			return nil, fmt.Errorf("read %s: %w", path, err)
		}
		out[newPairKey(rec[cols[0]], rec[cols[1]])] = [2]float64{num(rec[cols[2]]), num(rec[cols[3]])}
	}
}

// fmtSeconds prints a duration in seconds with three significant digits.
func fmtSeconds(s float64) string {
	switch {
	case s < 0.1:
		return fmt.Sprintf("%.3f s", s)
	case s < 10:
		return fmt.Sprintf("%.2f s", s)
	case s < 100:
		return fmt.Sprintf("%.1f s", s)
	}
	return fmt.Sprintf("%.0f s", s)
}

// fmtBytes prints a memory size in MiB, or GiB from 10 GiB on.
func fmtBytes(b int64) string {
	switch {
	case b <= 0:
		return "—"
	case b < 10<<30:
		return fmt.Sprintf("%.0f MiB", float64(b)/(1<<20))
	}
	return fmt.Sprintf("%.1f GiB", float64(b)/(1<<30))
}

// fmtMB prints a file size in decimal megabytes, as the issue quotes them.
func fmtMB(b int64) string {
	if b < 1e6 {
		return fmt.Sprintf("%.0f kB", float64(b)/1e3)
	}
	return fmt.Sprintf("%.0f MB", float64(b)/1e6)
}

// group writes n with a space between groups of three digits: 10 000 000.
func group(n int) string {
	s := strconv.Itoa(n)
	var b strings.Builder
	for i, c := range s {
		if i > 0 && (len(s)-i)%3 == 0 {
			b.WriteByte(' ')
		}
		b.WriteRune(c)
	}
	return b.String()
}

// dims is "rows × columns" for a log line.
func dims(d dataSet) string { return group(d.rows) + " × " + group(d.cols) }

func orDash(s string) string {
	if s == "" {
		return "—"
	}
	return s
}
