package engine

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"slices"
	"sort"
	"strconv"
	"strings"

	"concordat/engine/ledger"
	"concordat/io/render"
	"concordat/recipe"
)

// Sharding splits one run of a recipe across the tasks of a job array
// (Slurm's, or any scheduler's): each task computes a deterministic part of
// the cells and writes a shard file; a merge reads the N shard files, checks
// that they are the N parts of one run of this recipe on these data by this
// build, applies each test's multiplicity adjustment over all its cells, and
// writes exactly the tables and the ledger record that a single run would.
//
// The work units are the cells of Compute: one (test, pair, group), with a
// result per measure. Each test's cells, in their order (pair outer, group
// inner; for a matrix, the matrix's pairs row by row), are cut into N
// contiguous blocks of as equal a size as whole cells allow, and shard K of
// N takes block (K−1+t) mod N of test t: every shard gets a share of every
// large test, and the tests too small to split land on different shards.
// Resampling streams are keyed by the seed, the test, the pair and the
// group (stats.NewStreamKey), never by the worker or the shard, so a
// cell's numbers are the same whichever shard computes it; a merge of any N
// gives the bytes of a single run.
//
// A shard reads the data and the step cache is not used (neither by the
// shards nor by the merge); the merge reads the data again, to check it
// against the shards' input hashes and to draw figures.

// ShardFormat identifies the layout of a shard file.
const ShardFormat = "concordat-shard/1"

// Shard names shard K of N (1 ≤ K ≤ N).
type Shard struct {
	K int `json:"k"`
	N int `json:"n"`
}

// String writes the shard as "K/N".
func (s Shard) String() string { return fmt.Sprintf("%d/%d", s.K, s.N) }

// maxShards bounds N: a job array larger than this is a typing mistake.
const maxShards = 1_000_000

// ParseShard parses "K/N" with 1 ≤ K ≤ N.
func ParseShard(text string) (Shard, error) {
	ks, ns, ok := strings.Cut(strings.TrimSpace(text), "/")
	k, errK := strconv.Atoi(strings.TrimSpace(ks))
	n, errN := strconv.Atoi(strings.TrimSpace(ns))
	switch {
	case !ok || errK != nil || errN != nil:
		return Shard{}, fmt.Errorf("shard %q: write it as K/N, e.g. 3/8 for the third of eight", text)
	case n < 1 || n > maxShards:
		return Shard{}, fmt.Errorf("shard %q: N must be from 1 to %d", text, maxShards)
	case k < 1 || k > n:
		return Shard{}, fmt.Errorf("shard %q: K must be from 1 to N (%d); a Slurm array for N shards is --array=1-%d", text, n, n)
	}
	return Shard{K: k, N: n}, nil
}

// ShardFile is what one shard computed, and what it was computed from. Its
// results are those of its cells, in recipe order, with every float stored
// exactly.
type ShardFile struct {
	Format   string          `json:"format"` // ShardFormat
	Shard    Shard           `json:"shard"`
	Recipe   ledger.File     `json:"recipe"`   // path relative to the recipe's folder, sha256, bytes
	Settings json.RawMessage `json:"settings"` // the plan's resolved settings, as the ledger records them
	Tool     ledger.Tool     `json:"tool"`
	Build    string          `json:"build_sha256"` // the executable's sha256, "" when unknown
	Inputs   []ledger.Input  `json:"inputs"`
	Cells    int             `json:"cells"`             // cells of the whole run
	Results  int             `json:"results"`           // results of the whole run
	Parts    []ShardPart     `json:"parts"`             // one per test with cells in this shard
	Records  []shardResult   `json:"records,omitempty"` // the parts' results, in order (always written, last)
}

// ShardPart is one test's block of cells in a shard, and where its results
// go among the results of the whole run.
type ShardPart struct {
	Test        string `json:"test"`
	FirstCell   int    `json:"first_cell"` // index among the test's cells
	CellCount   int    `json:"cells"`
	FirstResult int    `json:"first_result"` // index among the run's results
	ResultCount int    `json:"results"`
}

// partition is a shard's or a merge's hook into Compute (run.go): which
// cells to compute, and, for a merge, the results it takes from shards.
type partition struct {
	shard  *Shard       // computing one shard; nil for a merge
	merge  []*ShardFile // merging these, in shard order
	parts  []ShardPart  // the shard's blocks, set by begin
	counts testCounts
}

// testCounts is the layout of a run's cells: per test, in recipe order,
// its cells (pairs × groups) and measures.
type testCounts struct {
	cells, measures []int
}

// blocks returns shard s's block of each test with cells: the layout of
// the package comment.
func (tc testCounts) blocks(plan *recipe.Plan, s Shard) []ShardPart {
	var out []ShardPart
	at := 0
	for ti, t := range plan.Tests {
		c, m := tc.cells[ti], tc.measures[ti]
		j := (s.K - 1 + ti) % s.N
		lo, hi := j*c/s.N, (j+1)*c/s.N
		if hi > lo {
			out = append(out, ShardPart{Test: t.Name, FirstCell: lo, CellCount: hi - lo,
				FirstResult: at + lo*m, ResultCount: (hi - lo) * m})
		}
		at += c * m
	}
	return out
}

// begin runs in Compute once the results are laid out and before any cell
// is computed. It returns which cells (by their first result's index) to
// compute: a shard's own, or none for a merge, which first fills results
// from the shard files after checking them against this run's inputs and
// layout.
func (p *partition) begin(plan *recipe.Plan, groupsOf map[*recipe.Pairing][]group, inputs []ledger.Input, results []Result) (func(at int) bool, error) {
	tc := testCounts{cells: make([]int, len(plan.Tests)), measures: make([]int, len(plan.Tests))}
	for ti, t := range plan.Tests {
		tc.cells[ti] = len(t.Pairing.Pairs) * len(groupsOf[t.Pairing])
		tc.measures[ti] = len(t.Measures)
	}
	p.counts = tc
	if p.shard != nil {
		p.parts = tc.blocks(plan, *p.shard)
		parts := p.parts
		return func(at int) bool {
			i := sort.Search(len(parts), func(i int) bool { return parts[i].FirstResult+parts[i].ResultCount > at })
			return i < len(parts) && parts[i].FirstResult <= at
		}, nil
	}

	filled := 0
	for _, f := range p.merge {
		if !slices.Equal(f.Inputs, inputs) {
			return nil, &ShardSetError{Reason: fmt.Sprintf("the data differ from those shard %s read: %s", f.Shard, inputsDiffer(f.Inputs, inputs))}
		}
		if f.Results != len(results) {
			return nil, &ShardSetError{Reason: fmt.Sprintf("shard %s was laid out for %d results, this run has %d", f.Shard, f.Results, len(results))}
		}
		want := tc.blocks(plan, f.Shard)
		if !slices.Equal(want, f.Parts) {
			return nil, &ShardSetError{Reason: fmt.Sprintf("shard %s holds other cells than shard %s of this recipe would", f.Shard, f.Shard)}
		}
		k := 0
		for _, part := range f.Parts {
			for i := range part.ResultCount {
				r, err := f.Records[k].result()
				if err != nil {
					return nil, fmt.Errorf("shard %s: result %d: %w", f.Shard, k+1, err)
				}
				results[part.FirstResult+i] = r
				k++
			}
		}
		filled += k
	}
	if filled != len(results) {
		return nil, &ShardSetError{Reason: fmt.Sprintf("the shards hold %d results, the run has %d", filled, len(results))}
	}
	if err := checkIdentities(plan, groupsOf, results); err != nil {
		return nil, err
	}
	return func(int) bool { return false }, nil
}

// checkIdentities checks that every result merged from a shard sits where
// its test, pair, group and measure belong in the layout of Compute.
func checkIdentities(plan *recipe.Plan, groupsOf map[*recipe.Pairing][]group, results []Result) error {
	at := 0
	for _, t := range plan.Tests {
		groups := groupsOf[t.Pairing]
		for _, pair := range t.Pairing.Pairs {
			for _, g := range groups {
				for _, m := range t.Measures {
					r := &results[at]
					if r.Test != t.Name || r.X != pair.X || r.Y != pair.Y || r.Group != g.name || r.Measure != m.String() {
						return &ShardSetError{Reason: fmt.Sprintf("result %d of the shards is %s %s–%s %s %s where this run has %s %s–%s %s %s",
							at+1, r.Test, r.X, r.Y, r.Group, r.Measure, t.Name, pair.X, pair.Y, g.name, m)}
					}
					at++
				}
			}
		}
	}
	return nil
}

// inputsDiffer names the first input that differs between a shard and now.
func inputsDiffer(was, now []ledger.Input) string {
	for i := range max(len(was), len(now)) {
		switch {
		case i >= len(was):
			return fmt.Sprintf("dataset %q is read now but was not then", now[i].Name)
		case i >= len(now):
			return fmt.Sprintf("dataset %q was read then but is not now", was[i].Name)
		case was[i] != now[i]:
			return fmt.Sprintf("dataset %q (%s) was sha256 %s, %d rows; now %s, %d rows",
				now[i].Name, now[i].Path, short(was[i].SHA256), was[i].Rows, short(now[i].SHA256), now[i].Rows)
		}
	}
	return "they differ"
}

func short(h string) string {
	if len(h) > 12 {
		return h[:12]
	}
	return h
}

// ShardSetError is a set of shard files that do not make one run of the
// recipe being merged: from another recipe, settings, build or data, or
// with a shard missing or given twice.
type ShardSetError struct{ Reason string }

func (e *ShardSetError) Error() string { return "cannot merge: " + e.Reason }

// ComputeShard computes shard s of plan and returns its file, writing
// nothing. The step cache is not used.
func ComputeShard(ctx context.Context, plan *recipe.Plan, s Shard, opts Options) (*ShardFile, error) {
	if s.K < 1 || s.K > s.N {
		return nil, fmt.Errorf("shard %s: K must be from 1 to N", s)
	}
	part := &partition{shard: &s}
	opts.CacheDir, opts.part = "", part
	comp, err := Compute(ctx, plan, opts)
	if err != nil {
		return nil, err
	}
	f, err := newShardFile(plan, opts)
	if err != nil {
		return nil, err
	}
	f.Shard, f.Inputs, f.Parts = s, comp.inputs, part.parts
	f.Results = len(comp.Results)
	for _, c := range part.counts.cells {
		f.Cells += c
	}
	f.Records = []shardResult{}
	for _, p := range part.parts {
		for _, r := range comp.Results[p.FirstResult : p.FirstResult+p.ResultCount] {
			f.Records = append(f.Records, wireResult(r))
		}
	}
	return f, nil
}

// newShardFile fills what a shard file says about the recipe and the
// build; a merge compares it with its own.
func newShardFile(plan *recipe.Plan, opts Options) (*ShardFile, error) {
	settings, err := json.Marshal(plan.Settings())
	if err != nil {
		return nil, fmt.Errorf("encode settings: %w", err)
	}
	sum := sha256.Sum256(plan.Source)
	return &ShardFile{
		Format:   ShardFormat,
		Recipe:   ledger.File{Path: relPath(plan.Dir, plan.Path), SHA256: hex.EncodeToString(sum[:]), Bytes: int64(len(plan.Source))},
		Settings: settings,
		Tool:     ledger.CurrentTool(version(opts)),
		Build:    executableSum(),
	}, nil
}

// CellCount returns how many of the run's cells the shard computed.
func (f *ShardFile) CellCount() int {
	n := 0
	for _, p := range f.Parts {
		n += p.CellCount
	}
	return n
}

// Encode writes the shard file as JSON, one result record per line.
func (f *ShardFile) Encode(w io.Writer) error {
	head := *f
	head.Records = nil
	b, err := json.Marshal(head)
	if err != nil {
		return err
	}
	// The records go last, one per line, so that a file of a million
	// results is written (and diffed) line by line.
	var buf bytes.Buffer
	b = bytes.TrimSuffix(b, []byte("}"))
	buf.Write(b)
	buf.WriteString(",\n\"records\": [")
	for i := range f.Records {
		if i > 0 {
			buf.WriteByte(',')
		}
		buf.WriteByte('\n')
		rb, err := json.Marshal(&f.Records[i])
		if err != nil {
			return err
		}
		buf.Write(rb)
		if buf.Len() > 1<<20 {
			if _, err := w.Write(buf.Bytes()); err != nil {
				return err
			}
			buf.Reset()
		}
	}
	buf.WriteString("\n]}\n")
	_, err = w.Write(buf.Bytes())
	return err
}

// WriteShardFile writes f to path atomically (render.Batch).
func WriteShardFile(path string, f *ShardFile) error {
	var buf bytes.Buffer
	if err := f.Encode(&buf); err != nil {
		return fmt.Errorf("encode shard file: %w", err)
	}
	var b render.Batch
	defer b.Abort()
	if err := b.Add(path, buf.Bytes()); err != nil {
		return err
	}
	if err := b.Commit(); err != nil {
		return err
	}
	return b.Release()
}

// ReadShardFile reads and checks a shard file: its format, its shard, and
// that its parts and records agree.
func ReadShardFile(path string) (*ShardFile, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	f, err := DecodeShardFile(data)
	if err != nil {
		return nil, fmt.Errorf("shard file %s: %w", path, err)
	}
	return f, nil
}

// DecodeShardFile parses a shard file's bytes and checks them as
// ReadShardFile does.
func DecodeShardFile(data []byte) (*ShardFile, error) {
	var f ShardFile
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&f); err != nil {
		return nil, fmt.Errorf("not a readable shard file: %w", err)
	}
	if dec.More() {
		return nil, fmt.Errorf("not a readable shard file: data after its end")
	}
	if f.Format != ShardFormat {
		return nil, fmt.Errorf("format %q is not %q", f.Format, ShardFormat)
	}
	if f.Shard.N < 1 || f.Shard.N > maxShards || f.Shard.K < 1 || f.Shard.K > f.Shard.N {
		return nil, fmt.Errorf("shard %s is not K/N with 1 ≤ K ≤ N", f.Shard)
	}
	total, end := 0, 0
	for _, p := range f.Parts {
		if p.FirstResult < end || p.ResultCount < 1 || p.CellCount < 1 || p.FirstCell < 0 || p.ResultCount%p.CellCount != 0 {
			return nil, fmt.Errorf("its parts are out of order or empty")
		}
		end = p.FirstResult + p.ResultCount
		total += p.ResultCount
	}
	if end > f.Results || total != len(f.Records) {
		return nil, fmt.Errorf("it holds %d results for parts of %d", len(f.Records), total)
	}
	return &f, nil
}

// Merge combines the shard files of one run of plan into its tables and
// ledger record, exactly as Run would have written them, or writes
// nothing. The files must be shards 1 to N of one N, each once, computed
// from the same recipe bytes, settings and build, on the data as they are
// now; anything else is a *ShardSetError.
func Merge(ctx context.Context, plan *recipe.Plan, files []*ShardFile, opts Options) (*Report, error) {
	started := opts.now()
	if _, err := ledger.Read(plan.LedgerPath()); err != nil {
		return nil, fmt.Errorf("ledger: %w", err)
	}
	comp, err := ComputeMerge(ctx, plan, files, opts)
	if err != nil {
		return nil, err
	}
	return comp.commitTimed(ctx, plan, opts, started)
}

// ComputeMerge is Merge without writing: the Computation that a single run
// of plan would have made, from the shard files.
func ComputeMerge(ctx context.Context, plan *recipe.Plan, files []*ShardFile, opts Options) (*Computation, error) {
	ordered, err := checkShardSet(plan, files, opts)
	if err != nil {
		return nil, err
	}
	opts.CacheDir, opts.part = "", &partition{merge: ordered}
	return Compute(ctx, plan, opts)
}

// checkShardSet checks that files are shards 1…N of one run of plan by
// this build, and returns them in shard order.
func checkShardSet(plan *recipe.Plan, files []*ShardFile, opts Options) ([]*ShardFile, error) {
	if len(files) == 0 {
		return nil, &ShardSetError{Reason: "no shard files"}
	}
	self, err := newShardFile(plan, opts)
	if err != nil {
		return nil, err
	}
	tool, _ := json.Marshal(self.Tool)
	n := files[0].Shard.N
	byK := make([]*ShardFile, n+1)
	for _, f := range files {
		switch {
		case f.Shard.N != n:
			return nil, &ShardSetError{Reason: fmt.Sprintf("the files are shards of different splits (%s and %s)", files[0].Shard, f.Shard)}
		case byK[f.Shard.K] != nil:
			return nil, &ShardSetError{Reason: fmt.Sprintf("shard %s is given twice", f.Shard)}
		case f.Recipe.SHA256 != self.Recipe.SHA256:
			return nil, &ShardSetError{Reason: fmt.Sprintf("shard %s was computed from other recipe bytes (sha256 %s, now %s); run the shards again", f.Shard, short(f.Recipe.SHA256), short(self.Recipe.SHA256))}
		case !bytes.Equal(f.Settings, self.Settings):
			return nil, &ShardSetError{Reason: fmt.Sprintf("shard %s was computed with other settings (a --param value?)", f.Shard)}
		}
		if t, _ := json.Marshal(f.Tool); !bytes.Equal(t, tool) || f.Build != self.Build && f.Build != "" && self.Build != "" {
			return nil, &ShardSetError{Reason: fmt.Sprintf("shard %s was computed by another build of concordat (%s %s); merge with the build that computed the shards", f.Shard, f.Tool.Version, short(f.Build))}
		}
		byK[f.Shard.K] = f
	}
	var missing []string
	for k := 1; k <= n; k++ {
		if byK[k] == nil {
			missing = append(missing, strconv.Itoa(k))
		}
	}
	if len(missing) > 0 {
		return nil, &ShardSetError{Reason: fmt.Sprintf("shard %s of %d is missing", strings.Join(missing, ", "), n)}
	}
	return byK[1:], nil
}
