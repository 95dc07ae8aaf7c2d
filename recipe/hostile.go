package recipe

import (
	"fmt"
	"unicode/utf8"

	"github.com/hashicorp/hcl/v2"
)

// Recipes that try to break the reader, refused with a plain diagnostic
// before they can.

// maxNesting bounds how deeply brackets, parentheses, braces and template
// interpolations nest in a recipe. HCL's parser descends once per level
// on the goroutine stack: about 10⁵ levels exhaust it, which ends the
// process (Go cannot recover from a stack overflow). Real recipes nest a
// handful of levels.
const maxNesting = 1000

// checkNesting reports the first opening bracket of src that is deeper
// than maxNesting. Brackets inside quoted strings count too (a string
// with a thousand unclosed "[" is not a recipe either), so the check
// needs no parser.
func checkNesting(src []byte, filename string) hcl.Diagnostics {
	depth := 0
	pos := hcl.Pos{Line: 1, Column: 1}
	for i := 0; i < len(src); {
		r, size := utf8.DecodeRune(src[i:])
		switch r {
		case '(', '[', '{':
			depth++
			if depth > maxNesting {
				end := hcl.Pos{Line: pos.Line, Column: pos.Column + 1, Byte: i + size}
				return hcl.Diagnostics{{
					Severity: hcl.DiagError,
					Summary:  "Nesting too deep",
					Detail:   fmt.Sprintf("Brackets, braces and parentheses nest more than %d levels deep here; a recipe needs a few. Is the file a recipe?", maxNesting),
					Subject:  &hcl.Range{Filename: filename, Start: pos, End: end},
				}}
			}
		case ')', ']', '}':
			depth = max(depth-1, 0)
		}
		i += size
		pos.Byte = i
		if r == '\n' {
			pos.Line, pos.Column = pos.Line+1, 1
		} else {
			pos.Column++
		}
	}
	return nil
}
