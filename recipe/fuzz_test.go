package recipe

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"testing"
)

// FuzzLoad feeds arbitrary bytes to the decoder as a recipe. Whatever the
// input, it must not panic, and it must return either errors and no plan,
// or a plan that describes and records itself.
func FuzzLoad(f *testing.F) {
	seeds, _ := filepath.Glob("testdata/*.hcl")
	for _, s := range seeds {
		src, err := os.ReadFile(s)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(src)
	}
	f.Add([]byte(`seed = 1e400`))
	f.Add([]byte(`ties "t" { max_share = 1/0 }`))
	f.Add([]byte(`dataset "d" { path = ["a", null] }`))
	f.Add([]byte("title = \"\xff${\""))
	f.Fuzz(func(t *testing.T, src []byte) {
		plan, diags := Parse(src, "fuzz/recipe.hcl")
		if (plan == nil) != diags.HasErrors() {
			t.Fatalf("plan %v with diagnostics %v", plan != nil, diags)
		}
		for _, d := range diags {
			if d.Subject == nil {
				t.Fatalf("diagnostic without a subject: %s: %s", d.Summary, d.Detail)
			}
		}
		if plan == nil {
			return
		}
		var out bytes.Buffer
		if err := plan.Describe(&out); err != nil {
			t.Fatal(err)
		}
		if _, err := json.Marshal(plan.Settings()); err != nil {
			t.Fatal(err)
		}
	})
}
