package ledger

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"math"
	"strings"
	"testing"

	"github.com/gowebpki/jcs"
)

func mustHash(t *testing.T, v any) string {
	t.Helper()
	h, err := Hash(v)
	if err != nil {
		t.Fatalf("Hash(%v): %v", v, err)
	}
	return h
}

func TestHashCanonical(t *testing.T) {
	type pair struct {
		X   string  `json:"x"`
		Y   string  `json:"y"`
		Rho float64 `json:"rho"`
	}
	want := mustHash(t, pair{X: "shade_pct", Y: "grade", Rho: -0.25})
	for _, v := range []any{
		map[string]any{"rho": -0.25, "y": "grade", "x": "shade_pct"},
		map[string]any{"y": "grade", "x": "shade_pct", "rho": -0.25},
		json.RawMessage("{\n  \"y\" : \"grade\",\n  \"rho\": -2.5e-1,\n  \"x\":\"shade_pct\"\n}"),
		json.RawMessage(`{"x":"shade\u005fpct","y":"grade","rho":-0.250}`),
	} {
		if got := mustHash(t, v); got != want {
			t.Errorf("Hash(%s) = %s, want %s", v, got, want)
		}
	}
	if got := mustHash(t, pair{X: "shade_pct", Y: "grade", Rho: -0.26}); got == want {
		t.Error("a different value hashed equal")
	}
	if len(want) != 64 || strings.ToLower(want) != want {
		t.Errorf("hash %q is not 64 lowercase hex digits", want)
	}
}

func TestHashRejectsNaN(t *testing.T) {
	if _, err := Hash(math.NaN()); err == nil {
		t.Error("Hash(NaN): no error")
	}
}

// From RFC 8785 §3.2.2 (serialization of primitive data types): the input
// and its canonical form, printed in the RFC.
const (
	rfc8785Input = `{
  "numbers": [333333333.33333329, 1E30, 4.50,
              2e-3, 0.000000000000000000000000001],
  "string": "\u20ac$\u000F\u000aA'\u0042\u0022\u005c\\\"\/",
  "literals": [null, true, false]
}`
	rfc8785Canonical = `{"literals":[null,true,false],"numbers":[333333333.3333333,1e+30,4.5,0.002,1e-27],"string":"€$\u000f\nA'B\"\\\\\"/"}`
)

func TestHashRFC8785(t *testing.T) {
	got, err := jcs.Transform([]byte(rfc8785Input))
	if err != nil {
		t.Fatal(err)
	}
	if string(got) != rfc8785Canonical {
		t.Errorf("canonical form\n got %s\nwant %s", got, rfc8785Canonical)
	}
	sum := sha256.Sum256([]byte(rfc8785Canonical))
	if h := mustHash(t, json.RawMessage(rfc8785Input)); h != hex.EncodeToString(sum[:]) {
		t.Errorf("Hash = %s, want the SHA-256 of the RFC's canonical form %x", h, sum)
	}
}

// From RFC 8785 §3.2.3 (sorting of object properties): members are sorted by
// their names' UTF-16 code units, which puts the emoji (a surrogate pair,
// 0xD83D…) before U+FB33.
func TestHashRFC8785Sorting(t *testing.T) {
	input := `{
  "\u20ac": "Euro Sign",
  "\r": "Carriage Return",
  "\ufb33": "Hebrew Letter Dalet With Dagesh",
  "1": "One",
  "\ud83d\ude00": "Emoji: Grinning Face",
  "\u0080": "Control",
  "\u00f6": "Latin Small Letter O With Diaeresis"
}`
	want := []string{"Carriage Return", "One", "Control", "Latin Small Letter O With Diaeresis",
		"Euro Sign", "Emoji: Grinning Face", "Hebrew Letter Dalet With Dagesh"}
	out, err := jcs.Transform([]byte(input))
	if err != nil {
		t.Fatal(err)
	}
	dec := json.NewDecoder(bytes.NewReader(out))
	var values []string
	// Tokens: "{", then name and value alternately, so values have even
	// positions.
	for i := 0; ; i++ {
		tok, err := dec.Token()
		if err != nil {
			break
		}
		if s, ok := tok.(string); ok && i%2 == 0 {
			values = append(values, s)
		}
	}
	if strings.Join(values, "|") != strings.Join(want, "|") {
		t.Errorf("order %q, want %q", values, want)
	}
}
