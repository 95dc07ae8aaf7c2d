package ledger_test

import (
	"fmt"

	"concordat/engine/ledger"
)

func ExamplePathFor() {
	fmt.Println(ledger.PathFor("recipes/orchard.hcl"))
	// Output: recipes/orchard.ledger.jsonl
}

func ExampleHash() {
	a, _ := ledger.Hash(map[string]any{"x": "shade_pct", "n": 48})
	b, _ := ledger.Hash(map[string]any{"n": 48.0, "x": "shade_pct"})
	fmt.Println(a == b)
	// Output: true
}
