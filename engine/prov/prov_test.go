package prov

import (
	"bytes"
	"context"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/santhosh-tekuri/jsonschema/v6"

	"concordat/engine"
	"concordat/engine/ledger"
	"concordat/recipe"
)

const testRecipe = `
title = "Shade and yield (invented)"
seed  = 20261202

dataset "plots" {
  path = "plots.csv"
}
pairing "p" {
  dataset = "plots"
  x       = ["shade"]
  y       = ["yield_kg", "sugar"]
}
test "rank" {
  pairing  = "p"
  measures = ["spearman", "kendall_b"]
}
test "linear" {
  pairing  = "p"
  measures = ["pearson"]
}
table "summary" {
  tests = ["rank", "linear"]
  path  = "out/summary.md"
}
table "records" {
  tests = ["rank"]
  path  = "out/records.json"
}
`

const plots = `plot,shade,yield_kg,sugar
1,10,5.5,12.1
2,20,4.1,11.0
3,30,4.4,11.9
4,40,3.0,10.2
5,50,3.2,10.8
6,60,2.4,9.9
`

// runs runs the test recipe twice, the second time on changed data, and
// returns its ledger's records.
func runs(t *testing.T) []ledger.Record {
	t.Helper()
	dir := t.TempDir()
	write := func(name, body string) {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	write("recipe.hcl", testRecipe)
	write("plots.csv", plots)
	clock := time.Date(2026, 12, 2, 9, 0, 0, 0, time.UTC)
	opts := engine.Options{Version: "0.0.0-test", Now: func() time.Time { clock = clock.Add(time.Second); return clock }}
	for i := range 2 {
		if i == 1 {
			write("plots.csv", strings.Replace(plots, "4,40,3.0", "4,40,3.6", 1))
		}
		plan, diags := recipe.Load(filepath.Join(dir, "recipe.hcl"))
		if diags.HasErrors() {
			t.Fatal(diags)
		}
		if _, err := engine.Run(context.Background(), plan, opts); err != nil {
			t.Fatal(err)
		}
	}
	recs, err := ledger.Read(filepath.Join(dir, "recipe.ledger.jsonl"))
	if err != nil {
		t.Fatal(err)
	}
	return recs
}

// schema compiles the PROV-JSON schema subset in testdata (its source, the
// W3C Member Submission of 2013, is named inside it), with formats such as
// date-time and uri asserted.
func schema(t *testing.T) *jsonschema.Schema {
	t.Helper()
	c := jsonschema.NewCompiler()
	c.AssertFormat()
	s, err := c.Compile(filepath.Join("testdata", "prov-json.schema.json"))
	if err != nil {
		t.Fatal(err)
	}
	return s
}

func validate(t *testing.T, s *jsonschema.Schema, doc []byte) error {
	t.Helper()
	inst, err := jsonschema.UnmarshalJSON(bytes.NewReader(doc))
	if err != nil {
		t.Fatal(err)
	}
	return s.Validate(inst)
}

func TestDocumentMatchesTheProvJSONSchema(t *testing.T) {
	recs := runs(t)
	doc, err := Document(recs)
	if err != nil {
		t.Fatal(err)
	}
	if err := validate(t, schema(t), doc); err != nil {
		t.Fatalf("the document does not match the PROV-JSON schema: %v\n%s", err, doc)
	}
	again, err := Document(recs)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(doc, again) {
		t.Error("two encodings of one ledger differ")
	}
}

// The schema checks shapes, not references: check that every relation
// names elements the document declares, and that the document holds what
// the package documentation promises.
func TestDocumentIsComplete(t *testing.T) {
	recs := runs(t)
	doc, err := Document(recs)
	if err != nil {
		t.Fatal(err)
	}
	var sections map[string]json.RawMessage
	if err := json.Unmarshal(doc, &sections); err != nil {
		t.Fatal(err)
	}
	d := map[string]map[string]map[string]any{}
	for name, raw := range sections {
		if name == "prefix" {
			continue
		}
		var m map[string]map[string]any
		if err := json.Unmarshal(raw, &m); err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		d[name] = m
	}
	declared := func(kind, id string) bool { _, ok := d[kind][id]; return ok }
	refs := map[string]string{
		"prov:entity": "entity", "prov:activity": "activity", "prov:agent": "agent",
		"prov:plan": "entity", "prov:starter": "activity", "prov:informed": "activity",
		"prov:informant": "activity", "prov:generatedEntity": "entity", "prov:usedEntity": "entity",
	}
	for _, rel := range []string{"used", "wasGeneratedBy", "wasStartedBy", "wasInformedBy", "wasAssociatedWith", "wasAttributedTo", "wasDerivedFrom"} {
		if len(d[rel]) == 0 {
			t.Errorf("no %s relations", rel)
		}
		for id, attrs := range d[rel] {
			for member, kind := range refs {
				if v, ok := attrs[member]; ok && !declared(kind, v.(string)) {
					t.Errorf("%s %s: %s %v is not a declared %s", rel, id, member, v, kind)
				}
			}
		}
	}
	// Two runs, each with two steps; one recipe; two data files (the data
	// changed); one agent (one build).
	count := func(kind, typ string) int {
		n := 0
		for _, a := range d[kind] {
			switch v := a["prov:type"].(type) {
			case string:
				if v == typ {
					n++
				}
			case []any:
				for _, x := range v {
					if x == typ {
						n++
					}
				}
			}
		}
		return n
	}
	for _, c := range []struct {
		kind, typ string
		want      int
	}{
		{"activity", "concordat:Run", 2},
		{"activity", "concordat:Step", 4},
		{"entity", "prov:Plan", 1},
		{"entity", "concordat:Data", 2},
		{"agent", "prov:SoftwareAgent", 1},
	} {
		if got := count(c.kind, c.typ); got != c.want {
			t.Errorf("%d %s of type %s, want %d", got, c.kind, c.typ, c.want)
		}
	}
	// Each run names the table of its own results: "records" holds "rank"
	// only, so it derives from one results entity per run.
	derived := 0
	for _, a := range d["wasDerivedFrom"] {
		if strings.HasPrefix(a["prov:generatedEntity"].(string), "concordat:table-") {
			derived++
		}
	}
	if derived != 2*(2+1) { // per run: summary ← rank, linear; records ← rank
		t.Errorf("%d derivations, want 6", derived)
	}
}

// The schema is a real check: documents that break PROV-JSON's rules fail.
func TestSchemaRejectsBrokenDocuments(t *testing.T) {
	s := schema(t)
	for name, doc := range map[string]string{
		"unknown section":      `{"prefix": {}, "entities": {}}`,
		"generation no entity": `{"prefix": {}, "wasGeneratedBy": {"_:g": {"prov:activity": "ex:a"}}}`,
		"usage no activity":    `{"prefix": {}, "used": {"_:u": {"prov:entity": "ex:e"}}}`,
		"bad start time":       `{"prefix": {}, "activity": {"ex:a": {"prov:startTime": "yesterday"}}}`,
		"unqualified name":     `{"prefix": {}, "entity": {"e": {}}}`,
		"object attribute":     `{"prefix": {}, "entity": {"ex:e": {"ex:x": {"a": 1}}}}`,
		"prefix not a uri":     `{"prefix": {"ex": "not a uri"}}`,
	} {
		if err := validate(t, s, []byte(doc)); err == nil {
			t.Errorf("%s: accepted %s", name, doc)
		}
	}
	if err := validate(t, s, []byte(`{"prefix": {"ex": "http://example.org/"}, "entity": {"ex:e": {"prov:type": ["a", {"$": "1", "type": "xsd:int"}]}}}`)); err != nil {
		t.Errorf("a valid document was refused: %v", err)
	}
}

func TestLocalNames(t *testing.T) {
	for in, want := range map[string]string{
		"shade_grade": "shade_5Fgrade",
		"a b":         "a_20b",
		"v1.2-rc":     "v1.2-rc",
		"é":           "_C3_A9",
	} {
		if got := local(in); got != want {
			t.Errorf("local(%q) = %q, want %q", in, got, want)
		}
	}
}
