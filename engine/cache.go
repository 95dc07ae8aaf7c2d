package engine

import (
	"bytes"
	"crypto/sha256"
	"encoding/gob"
	"encoding/hex"
	"io"
	"os"
	"path/filepath"
	"sync"
)

// The step cache keeps the results of each test, content-addressed by the
// step's input hash (the test's resolved settings, the seed, the row
// filter and the sha256 of every data file it reads: stepInputHash) and by
// the build of concordat that computed them (the sha256 of its executable),
// so a rerun of an unchanged step reads its results instead of computing
// them, and a changed input invalidates exactly the steps that read it. A
// rerun from the cache writes the same tables and the same run hash; its
// ledger record names the tests that came from the cache (ledger.Record's
// Cached).
//
// An entry is a gob file under <dir>/steps/<first two hex digits>/<key>,
// written atomically (a temporary file renamed into place) and checked on
// every read: its results must hash to the result hash stored with them,
// or it counts as a miss. The cache is a convenience: a folder that cannot
// be made or written, or an entry that cannot be read, means the step is
// computed as if there were no cache, and nothing is said.

// cacheFormat names the entry layout; a new layout takes a new name and
// leaves old entries unread.
const cacheFormat = "concordat-step-cache/1"

// stepCache is an open step cache; nil means none.
type stepCache struct {
	dir  string // <cache folder>/steps
	tool string // the executable's sha256
}

// cacheEntry is what an entry file holds.
type cacheEntry struct {
	Format       string
	Key          string
	ResultSHA256 string
	Results      []Result
}

// openStepCache opens the cache under dir ("" for none). It returns nil
// when the executable cannot be hashed, since entries must not outlive
// the build that computed them.
func openStepCache(dir string) *stepCache {
	if dir == "" {
		return nil
	}
	tool := executableSum()
	if tool == "" {
		return nil
	}
	return &stepCache{dir: filepath.Join(dir, "steps"), tool: tool}
}

// executableSum is the sha256 of the running executable, or "" when it
// cannot be read. A version string alone would not do: development builds
// all call themselves "devel".
var executableSum = sync.OnceValue(func() string {
	exe, err := os.Executable()
	if err != nil {
		return ""
	}
	f, err := os.Open(exe)
	if err != nil {
		return ""
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, f); err != nil {
		return ""
	}
	return hex.EncodeToString(h.Sum(nil))
})

// key is the entry name of a step with input hash inHash.
func (c *stepCache) key(inHash string) string {
	sum := sha256.Sum256([]byte(cacheFormat + "\n" + c.tool + "\n" + inHash))
	return hex.EncodeToString(sum[:])
}

func (c *stepCache) path(key string) string {
	return filepath.Join(c.dir, key[:2], key)
}

// load returns the n results stored for key, or false.
func (c *stepCache) load(key string, n int) ([]Result, bool) {
	if c == nil {
		return nil, false
	}
	data, err := os.ReadFile(c.path(key))
	if err != nil {
		return nil, false
	}
	var e cacheEntry
	if err := gob.NewDecoder(bytes.NewReader(data)).Decode(&e); err != nil {
		return nil, false
	}
	if e.Format != cacheFormat || e.Key != key || len(e.Results) != n {
		return nil, false
	}
	for i := range e.Results {
		// gob leaves out empty slices; the record writes them as [].
		r := &e.Results[i]
		r.Warnings = nonNilStrings(r.Warnings)
		r.Controls = nonNilStrings(r.Controls)
	}
	if sum, err := resultHash(e.Results); err != nil || sum != e.ResultSHA256 {
		return nil, false // damaged or edited: compute instead
	}
	return e.Results, true
}

// store keeps results under key; any failure leaves the cache as it was.
func (c *stepCache) store(key string, results []Result, resultSHA string) {
	if c == nil {
		return
	}
	var buf bytes.Buffer
	if err := gob.NewEncoder(&buf).Encode(cacheEntry{Format: cacheFormat, Key: key, ResultSHA256: resultSHA, Results: results}); err != nil {
		return
	}
	dir := filepath.Dir(c.path(key))
	if err := os.MkdirAll(dir, 0o777); err != nil {
		return
	}
	f, err := os.CreateTemp(dir, ".entry-*")
	if err != nil {
		return
	}
	_, werr := f.Write(buf.Bytes())
	cerr := f.Close()
	if werr != nil || cerr != nil || os.Rename(f.Name(), c.path(key)) != nil {
		os.Remove(f.Name())
	}
}
