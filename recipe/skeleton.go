package recipe

import (
	"fmt"
	"io"
	"path/filepath"
	"strings"
	"unicode"

	"github.com/hashicorp/hcl/v2/hclwrite"
)

// SkeletonColumn is what a recipe skeleton needs to know of a data column.
type SkeletonColumn struct {
	Name     string
	Numeric  bool     // numbers: paired as they are
	Labels   []string // text: the distinct labels seen, in a stable order
	Distinct int
}

// MaxSkeletonLevels is the most labels a text column may have for a
// skeleton to offer it as an ordinal column with a levels list; a column
// with more (an identifier, free text) is only mentioned in a comment.
const MaxSkeletonLevels = 12

// WriteSkeleton writes a ready-to-edit recipe for the data file at path (as
// the recipe should name it) of the given format: a dataset block with a
// levels list for each text column of few labels (in the order given, for
// the user to put from low to high), a pairing of every number and ordinal
// column, a test of Spearman's rho and Kendall's tau-b with Holm's
// adjustment, and a Markdown table. Comments say what to check. The text is
// formatted as hclwrite formats HCL, and it parses as a recipe.
func WriteSkeleton(w io.Writer, path, format string, cols []SkeletonColumn) error {
	name := identifier(strings.TrimSuffix(filepath.Base(path), filepath.Ext(path)))
	var b strings.Builder
	fmt.Fprintf(&b, "# Recipe skeleton for %s, written by concordat inspect --recipe.\n", quote(path))
	b.WriteString("# Before you run it: put each levels list in order from low to high, remove\n")
	b.WriteString("# the columns you do not want to pair, and check the missing-value tokens.\n")
	b.WriteString("# Paths are relative to the folder this recipe is saved in.\n\n")
	fmt.Fprintf(&b, "title = %s\n", quote("Rank correlations in "+filepath.Base(path)))
	b.WriteString("seed = 1 # drives permutations and bootstrap resamples; recorded in the ledger\n\n")

	fmt.Fprintf(&b, "dataset %s {\n", quote(name))
	fmt.Fprintf(&b, "path = %s\n", quote(path))
	fmt.Fprintf(&b, "format = %s\n", quote(format))
	if format != "parquet" {
		b.WriteString("missing = [\"\", \"NA\"]\n")
	}
	var paired, groups []string
	for _, c := range cols {
		switch {
		case c.Numeric:
			paired = append(paired, c.Name)
		case len(c.Labels) > 0 && c.Distinct <= MaxSkeletonLevels:
			fmt.Fprintf(&b, "\n# %d labels seen: put them in order, low to high (or delete this block\n# and use the column as a grouping column with by)\n", c.Distinct)
			fmt.Fprintf(&b, "column %s {\nlevels = %s\n}\n", quote(c.Name), hclList(c.Labels))
			paired = append(paired, c.Name)
			groups = append(groups, c.Name)
		case c.Distinct > 0:
			fmt.Fprintf(&b, "\n# %s: text with %d distinct values (an identifier or free text?), not paired\n", quote(c.Name), c.Distinct)
		default:
			fmt.Fprintf(&b, "\n# %s: no values concordat can read, not paired\n", quote(c.Name))
		}
	}
	b.WriteString("}\n\n")

	b.WriteString("pairing \"all_pairs\" {\n")
	fmt.Fprintf(&b, "dataset = %s\n", quote(name))
	if len(paired) < 2 {
		b.WriteString("# Fewer than two columns to pair were found: list at least two here.\n")
	}
	b.WriteString("columns = " + hclList(paired) + " # every pair among these\n")
	b.WriteString("missing = \"pairwise\"\n")
	if len(groups) > 0 {
		fmt.Fprintf(&b, "# by = %s # one analysis per label of a grouping column, plus \"all\"\n", quote(groups[0]))
	}
	b.WriteString("}\n\n")

	b.WriteString("test \"rank_correlations\" {\n")
	b.WriteString("pairing = \"all_pairs\"\n")
	b.WriteString("measures = [\"spearman\", \"kendall_b\"]\n")
	b.WriteString("adjust = \"holm\" # over the pairs of each measure\n")
	b.WriteString("}\n\n")

	b.WriteString("table \"results\" {\n")
	b.WriteString("tests = [\"rank_correlations\"]\n")
	fmt.Fprintf(&b, "path = %s\n", quote("out/"+name+".md"))
	b.WriteString("}\n")

	_, err := w.Write(hclwrite.Format([]byte(b.String())))
	return err
}

// identifier makes a block label from a file name: lowercase letters,
// digits and underscores, starting with a letter.
func identifier(s string) string {
	var b strings.Builder
	for _, r := range strings.ToLower(s) {
		switch {
		case r < 0x80 && (unicode.IsLetter(r) || unicode.IsDigit(r)):
			b.WriteRune(r)
		case b.Len() > 0 && !strings.HasSuffix(b.String(), "_"):
			b.WriteByte('_')
		}
	}
	out := strings.Trim(b.String(), "_")
	if out == "" || !unicode.IsLetter(rune(out[0])) {
		out = "data_" + out
	}
	return strings.TrimSuffix(out, "_")
}
