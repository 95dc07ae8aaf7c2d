// Package prov writes a provenance ledger as a W3C PROV-JSON document, so
// that the history of a recipe can be archived with a paper in a standard
// form.
//
// The mapping (PROV-DM terms; W3C Recommendation, PROV-DM: The PROV Data
// Model, 2013; serialised as the W3C Member Submission PROV-JSON, 2013):
//
//   - entities: the recipe (also a prov:Plan), each input data file, each
//     test's results, and each table written; files are named by their
//     sha256, so one file used by several runs is one entity;
//   - activities: each run (a ledger record), with its start and end, and
//     each test of a run (a step), started by its run;
//   - agent: the build of concordat that ran it (a prov:SoftwareAgent), by
//     its version, Go version, platform and computing modules.
//
// Relations: a run and its steps used the recipe and the inputs, each step
// generated its results, the run generated its tables, each table was
// derived from the results of its tests, the run was informed by its steps,
// and the run and its steps were associated with the agent, the run with
// the recipe as its plan.
//
// Identifiers are qualified names in the "concordat" namespace,
// urn:concordat:, with a local part of letters, digits, '-', '_' and '.'
// (see local).
// The document depends only on the ledger's records: the same ledger gives
// the same bytes.
package prov

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"strconv"
	"strings"

	"concordat/engine/ledger"
)

// Namespace is the URI that the "concordat" prefix stands for.
const Namespace = "urn:concordat:"

// A document is a PROV-JSON document: each kind of element and relation is
// a map from identifier to attributes. encoding/json writes map keys in
// sorted order, so the encoding is deterministic.
type document struct {
	Prefix            map[string]string `json:"prefix"`
	Entity            map[string]attrs  `json:"entity,omitempty"`
	Activity          map[string]attrs  `json:"activity,omitempty"`
	Agent             map[string]attrs  `json:"agent,omitempty"`
	Used              map[string]attrs  `json:"used,omitempty"`
	WasGeneratedBy    map[string]attrs  `json:"wasGeneratedBy,omitempty"`
	WasStartedBy      map[string]attrs  `json:"wasStartedBy,omitempty"`
	WasInformedBy     map[string]attrs  `json:"wasInformedBy,omitempty"`
	WasAssociatedWith map[string]attrs  `json:"wasAssociatedWith,omitempty"`
	WasAttributedTo   map[string]attrs  `json:"wasAttributedTo,omitempty"`
	WasDerivedFrom    map[string]attrs  `json:"wasDerivedFrom,omitempty"`
}

type attrs map[string]any

// typed is a PROV-JSON typed literal: {"$": "20261202", "type": "xsd:long"}.
type typed struct {
	Value string `json:"$"`
	Type  string `json:"type"`
}

func long(n int64) typed { return typed{strconv.FormatInt(n, 10), "xsd:long"} }

// dateTime is a time as PROV-JSON writes prov:startTime, prov:endTime and
// prov:time: an xsd:dateTime string (the ledger's RFC 3339 times are).
func dateTime(s string) string { return s }

// settings is the part of a record's settings that says which dataset each
// test read and which tests each table holds.
type settings struct {
	Tests []struct {
		Name    string `json:"name"`
		Pairing string `json:"pairing"`
	} `json:"tests"`
	Pairings []struct {
		Name    string `json:"name"`
		Dataset string `json:"dataset"`
	} `json:"pairings"`
	Tables []struct {
		Name  string   `json:"name"`
		Tests []string `json:"tests"`
	} `json:"tables"`
}

// Document returns the PROV-JSON document of a ledger's records (in ledger
// order; record i is run i+1), indented, ending in a newline.
func Document(recs []ledger.Record) ([]byte, error) {
	d := &document{
		Prefix: map[string]string{
			"concordat": Namespace,
			"xsd":       "http://www.w3.org/2001/XMLSchema#",
			"prov":      "http://www.w3.org/ns/prov#",
		},
		Entity: map[string]attrs{}, Activity: map[string]attrs{}, Agent: map[string]attrs{},
		Used: map[string]attrs{}, WasGeneratedBy: map[string]attrs{}, WasStartedBy: map[string]attrs{},
		WasInformedBy: map[string]attrs{}, WasAssociatedWith: map[string]attrs{},
		WasAttributedTo: map[string]attrs{}, WasDerivedFrom: map[string]attrs{},
	}
	b := &builder{d: d}
	for i := range recs {
		if err := b.run(i+1, &recs[i]); err != nil {
			return nil, err
		}
	}
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	enc.SetIndent("", "  ")
	if err := enc.Encode(d); err != nil {
		return nil, fmt.Errorf("encode PROV-JSON: %w", err)
	}
	return buf.Bytes(), nil
}

type builder struct {
	d *document
	n int // relations made so far, for their blank-node identifiers
}

// relation adds a relation of one kind under a new blank-node identifier.
func (b *builder) relation(m map[string]attrs, a attrs) {
	b.n++
	m["_:r"+strconv.Itoa(b.n)] = a
}

func (b *builder) run(n int, r *ledger.Record) error {
	var s settings
	if len(r.Settings) > 0 {
		if err := json.Unmarshal(r.Settings, &s); err != nil {
			return fmt.Errorf("record %d: read settings: %w", n, err)
		}
	}
	d := b.d
	agent, err := b.agent(r.Tool)
	if err != nil {
		return err
	}

	recipe := "concordat:recipe-" + r.Recipe.SHA256
	d.Entity[recipe] = attrs{
		"prov:type":        []string{"prov:Plan", "concordat:Recipe"},
		"prov:label":       r.Recipe.Path,
		"concordat:path":   r.Recipe.Path,
		"concordat:sha256": r.Recipe.SHA256,
		"concordat:bytes":  long(r.Recipe.Bytes),
	}
	inputs := map[string]string{} // dataset name → entity
	for _, in := range r.Inputs {
		id := "concordat:data-" + in.SHA256
		inputs[in.Name] = id
		d.Entity[id] = attrs{
			"prov:type":         "concordat:Data",
			"prov:label":        in.Path,
			"concordat:dataset": in.Name,
			"concordat:path":    in.Path,
			"concordat:sha256":  in.SHA256,
			"concordat:bytes":   long(in.Bytes),
			"concordat:rows":    long(in.Rows),
		}
	}

	runID := fmt.Sprintf("concordat:run-%d-%s", n, short(r.RunSHA256))
	d.Activity[runID] = attrs{
		"prov:type":            "concordat:Run",
		"prov:label":           fmt.Sprintf("run %d of %s", n, r.Recipe.Path),
		"prov:startTime":       dateTime(r.Started),
		"prov:endTime":         dateTime(r.Finished),
		"concordat:record":     long(int64(n)),
		"concordat:title":      r.Title,
		"concordat:seed":       long(r.Seed),
		"concordat:run_sha256": r.RunSHA256,
		"concordat:settings":   string(r.Settings),
	}
	if r.PrevSHA256 != "" {
		d.Activity[runID]["concordat:prev_sha256"] = r.PrevSHA256
	}
	b.relation(d.Used, attrs{"prov:activity": runID, "prov:entity": recipe})
	for _, in := range r.Inputs {
		b.relation(d.Used, attrs{"prov:activity": runID, "prov:entity": inputs[in.Name]})
	}
	b.relation(d.WasAssociatedWith, attrs{"prov:activity": runID, "prov:agent": agent, "prov:plan": recipe})

	results := map[string]string{} // test → entity
	for _, st := range r.Steps {
		step := runID + "-test-" + local(st.Test)
		d.Activity[step] = attrs{
			"prov:type":              "concordat:Step",
			"prov:label":             "test " + st.Test,
			"prov:startTime":         dateTime(r.Started),
			"prov:endTime":           dateTime(r.Finished),
			"concordat:test":         st.Test,
			"concordat:input_sha256": st.InputSHA256,
		}
		b.relation(d.WasStartedBy, attrs{"prov:activity": step, "prov:starter": runID, "prov:time": dateTime(r.Started)})
		b.relation(d.WasAssociatedWith, attrs{"prov:activity": step, "prov:agent": agent})
		b.relation(d.Used, attrs{"prov:activity": step, "prov:entity": recipe})
		for _, in := range stepInputs(&s, st.Test, r.Inputs) {
			b.relation(d.Used, attrs{"prov:activity": step, "prov:entity": inputs[in]})
		}
		res := "concordat:results-" + st.ResultSHA256
		results[st.Test] = res
		d.Entity[res] = attrs{
			"prov:type":         "concordat:Results",
			"prov:label":        "results of test " + st.Test,
			"concordat:test":    st.Test,
			"concordat:sha256":  st.ResultSHA256,
			"concordat:results": long(int64(st.Results)),
		}
		b.relation(d.WasGeneratedBy, attrs{"prov:entity": res, "prov:activity": step, "prov:time": dateTime(r.Finished)})
		b.relation(d.WasInformedBy, attrs{"prov:informed": runID, "prov:informant": step})
	}

	for _, o := range r.Outputs {
		id := "concordat:table-" + o.SHA256
		d.Entity[id] = attrs{
			"prov:type":        "concordat:Table",
			"prov:label":       o.Path,
			"concordat:table":  o.Table,
			"concordat:path":   o.Path,
			"concordat:format": o.Format,
			"concordat:sha256": o.SHA256,
			"concordat:bytes":  long(o.Bytes),
		}
		b.relation(d.WasGeneratedBy, attrs{"prov:entity": id, "prov:activity": runID, "prov:time": dateTime(r.Finished)})
		b.relation(d.WasAttributedTo, attrs{"prov:entity": id, "prov:agent": agent})
		for _, test := range tableTests(&s, o.Table) {
			if res, ok := results[test]; ok {
				b.relation(d.WasDerivedFrom, attrs{"prov:generatedEntity": id, "prov:usedEntity": res, "prov:activity": runID})
			}
		}
	}
	return nil
}

// agent adds the build of concordat that ran a record, once per distinct
// build, and returns its identifier.
func (b *builder) agent(t ledger.Tool) (string, error) {
	data, err := json.Marshal(t)
	if err != nil {
		return "", fmt.Errorf("encode tool: %w", err)
	}
	sum := sha256.Sum256(data)
	id := "concordat:tool-" + local(t.Version) + "-" + hex.EncodeToString(sum[:8])
	if _, ok := b.d.Agent[id]; ok {
		return id, nil
	}
	modules := make([]string, len(t.Modules))
	for i, m := range t.Modules {
		modules[i] = m.Path + "@" + m.Version
	}
	a := attrs{
		"prov:type":          []string{"prov:SoftwareAgent", "concordat:Tool"},
		"prov:label":         "concordat " + t.Version,
		"concordat:version":  t.Version,
		"concordat:go":       t.Go,
		"concordat:platform": t.OS + "/" + t.Arch,
	}
	if len(modules) > 0 { // PROV-JSON has no empty list of values
		a["concordat:modules"] = modules
	}
	b.d.Agent[id] = a
	return id, nil
}

// stepInputs lists the datasets a test read, from the settings; when the
// settings do not say (an unknown layout), every input.
func stepInputs(s *settings, test string, inputs []ledger.Input) []string {
	for _, t := range s.Tests {
		if t.Name != test {
			continue
		}
		for _, p := range s.Pairings {
			if p.Name == t.Pairing {
				for _, in := range inputs {
					if in.Name == p.Dataset {
						return []string{in.Name}
					}
				}
			}
		}
	}
	names := make([]string, len(inputs))
	for i, in := range inputs {
		names[i] = in.Name
	}
	return names
}

// tableTests lists the tests a table holds, from the settings.
func tableTests(s *settings, table string) []string {
	for _, t := range s.Tables {
		if t.Name == table {
			return t.Tests
		}
	}
	return nil
}

// local makes s safe as the local part of a qualified name: letters,
// digits, '-' and '.' stay, and every other byte, '_' included, is written
// as _XX (hex), so that two names never share a local part.
func local(s string) string {
	var b strings.Builder
	for i := 0; i < len(s); i++ {
		c := s[i]
		if 'a' <= c && c <= 'z' || 'A' <= c && c <= 'Z' || '0' <= c && c <= '9' || c == '-' || c == '.' {
			b.WriteByte(c)
			continue
		}
		fmt.Fprintf(&b, "_%02X", c)
	}
	return b.String()
}

func short(h string) string {
	if len(h) > 16 {
		return h[:16]
	}
	return h
}
