package ledger

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"

	"github.com/gowebpki/jcs"
)

// Hash returns the lowercase hex SHA-256 of the canonical JSON of v: v is
// marshalled with encoding/json and then canonicalized as RFC 8785 (JSON
// Canonicalization Scheme) prescribes — object members sorted, no
// insignificant white space, numbers in their shortest form. Equal values
// therefore hash equal whatever their map order or formatting; a
// json.RawMessage hashes the same as the value it encodes.
//
// RFC 8785 reads every number as an IEEE double, so integers beyond ±2^53
// lose their low bits and two such integers can hash equal: hash them as
// strings (with the ",string" option of a struct tag). NaN and infinities are
// not JSON and make Hash fail; encode undefined values as null.
func Hash(v any) (string, error) {
	data, err := json.Marshal(v)
	if err != nil {
		return "", fmt.Errorf("hash: %w", err)
	}
	canonical, err := jcs.Transform(data)
	if err != nil {
		return "", fmt.Errorf("hash: canonicalize: %w", err)
	}
	sum := sha256.Sum256(canonical)
	return hex.EncodeToString(sum[:]), nil
}

// sumHex returns the lowercase hex SHA-256 of b.
func sumHex(b []byte) string {
	sum := sha256.Sum256(b)
	return hex.EncodeToString(sum[:])
}

// content is the part of a Record that RunSHA256 covers: every field above
// it. The seed is hashed as a string because RFC 8785 would round an int64
// beyond 2^53.
type content struct {
	Format   string          `json:"format"`
	Recipe   File            `json:"recipe"`
	Title    string          `json:"title"`
	Tool     Tool            `json:"tool"`
	Seed     int64           `json:"seed,string"`
	Settings json.RawMessage `json:"settings"`
	Inputs   []Input         `json:"inputs"`
	Steps    []Step          `json:"steps"`
	Outputs  []Output        `json:"outputs"`
}

// RunHash returns the run_sha256 that Append would store rec with: the hash
// of every field above run_sha256, after filling an empty format and nil
// lists as Append does. It ignores the RunSHA256, PrevSHA256 and times that
// rec holds. Two records hash equal exactly when the same build ran the same
// recipe on the same inputs and wrote the same outputs (see the package
// documentation).
func RunHash(rec Record) (string, error) {
	normalize(&rec)
	return runHash(&rec)
}

// runHash returns the RunSHA256 of r.
func runHash(r *Record) (string, error) {
	settings := r.Settings
	if settings == nil {
		settings = json.RawMessage("null")
	}
	// FormatV2 adds only a field that is not hashed (Cached), so its
	// content hashes as FormatV1's: a run that took results from the step
	// cache has the run hash of the run that computed them.
	format := r.Format
	if format == FormatV2 {
		format = FormatV1
	}
	return Hash(content{
		Format:   format,
		Recipe:   r.Recipe,
		Title:    r.Title,
		Tool:     r.Tool,
		Seed:     r.Seed,
		Settings: settings,
		Inputs:   r.Inputs,
		Steps:    r.Steps,
		Outputs:  r.Outputs,
	})
}
