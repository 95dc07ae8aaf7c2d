package recipe

import (
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

const h1 = "442362460cd4fe8060973a5987590cf4570bfcdbddb1d71ff79025f6655e3d80"
const h2 = "0000000000000000000000000000000000000000000000000000000000000001"

func TestPinKeepsEverythingElse(t *testing.T) {
	src := `# Orchard survey: keep this comment
title = "x"   # and this one

dataset "harvest" {
  path    = "data/h.csv"   # where the data live
  missing = ["", "NA"]

  # levels, low to high
  column "grade" {
    levels = ["a", "b"]
  }
}

dataset "pinned" {
  path   = "p.csv"
  sha256 = "` + h2 + `" # pinned on 1 December
}

dataset "untouched" {
	path="u.csv"
}

dataset "tabbed" {
	path="t.csv" // tabs stay tabs
	missing=["x"]
}
`
	out, changed, diags := Pin([]byte(src), "r.hcl", map[string]string{"harvest": h1, "pinned": h1, "tabbed": h2})
	if diags.HasErrors() {
		t.Fatal(diags)
	}
	if !slices.Equal(changed, []string{"harvest", "pinned", "tabbed"}) {
		t.Errorf("changed %v", changed)
	}
	want := strings.Replace(src, `  path    = "data/h.csv"   # where the data live
`, `  path    = "data/h.csv"   # where the data live
  sha256  = "`+h1+`"
`, 1)
	want = strings.Replace(want, `sha256 = "`+h2+`" # pinned on 1 December`, `sha256 = "`+h1+`" # pinned on 1 December`, 1)
	want = strings.Replace(want, "\tpath=\"t.csv\" // tabs stay tabs\n", "\tpath=\"t.csv\" // tabs stay tabs\n\tsha256 =\""+h2+"\"\n", 1)
	if string(out) != want {
		t.Errorf("got\n%s\nwant\n%s", out, want)
	}
	// The result parses, with the pins in place.
	dir := t.TempDir()
	path := filepath.Join(dir, "r.hcl")
	if err := os.WriteFile(path, out, 0o644); err != nil {
		t.Fatal(err)
	}
	p, diags := Load(path)
	if diags.HasErrors() {
		t.Fatal(diags)
	}
	if p.Datasets[0].SHA256 != h1 || p.Datasets[1].SHA256 != h1 || p.Datasets[2].SHA256 != "" || p.Datasets[3].SHA256 != h2 {
		t.Errorf("pins %q %q %q", p.Datasets[0].SHA256, p.Datasets[1].SHA256, p.Datasets[2].SHA256)
	}
	// Pinning again with the same hashes changes nothing.
	again, changed, _ := Pin(out, "r.hcl", map[string]string{"harvest": h1, "pinned": h1, "tabbed": h2})
	if len(changed) != 0 || string(again) != string(out) {
		t.Errorf("a second pin changed %v", changed)
	}
}

// A one-line dataset block cannot take a new line: an error points at it,
// and nothing is written.
func TestPinOneLineBlock(t *testing.T) {
	src := "dataset \"d\" { path = \"d.csv\" }\n"
	out, changed, diags := Pin([]byte(src), "r.hcl", map[string]string{"d": h1})
	if !diags.HasErrors() || out != nil || changed != nil {
		t.Fatalf("%s %v %v", out, changed, diags)
	}
	if !strings.Contains(diags.Error(), "r.hcl:1,15-29: Cannot pin this dataset") {
		t.Errorf("%v", diags)
	}
}

// CRLF line endings stay CRLF; a pin in place keeps its comment.
func TestPinCRLF(t *testing.T) {
	src := "dataset \"d\" {\r\n  path = \"d.csv\"\r\n}\r\n"
	out, _, diags := Pin([]byte(src), "r.hcl", map[string]string{"d": h1})
	if diags.HasErrors() {
		t.Fatal(diags)
	}
	if want := "dataset \"d\" {\r\n  path = \"d.csv\"\r\n  sha256 = \"" + h1 + "\"\r\n}\r\n"; string(out) != want {
		t.Errorf("%q\nwant %q", out, want)
	}
}
