package recipe

import (
	"strings"
	"unicode/utf8"

	"github.com/agext/levenshtein"
)

// vocab is a closed set of recipe words, such as the tie rules.
type vocab struct {
	noun   string   // "tie rule": "Unknown tie rule", `The tie rule "x" is not known.`
	plural string   // "rules": "Known rules: …"
	words  []string // accepted, in the order they are listed to the user
	later  []string // known words that this version does not implement yet
	only   string   // what this version offers instead, e.g. "asymptotic p-values only"
}

var (
	tieRules = &vocab{noun: "tie rule", plural: "rules",
		words: []string{"average", "min", "max", "dense", "first"}}
	alternatives = &vocab{noun: "alternative", plural: "alternatives",
		words: []string{"two-sided", "greater", "less"}}
	pMethods = &vocab{noun: "p-value method", plural: "methods",
		words: []string{"auto", "exact", "asymptotic", "permutation"}}
	measureWords = &vocab{noun: "measure", plural: "measures",
		words: []string{"spearman", "kendall_b", "kendall_a", "kendall_c", "gamma",
			"somers_d", "somers_d_yx", "somers_d_xy", "pearson"}}
	missingRules = &vocab{noun: "missing-value rule", plural: "rules",
		words: []string{"pairwise", "listwise"}}
	intervalMethods = &vocab{noun: "interval method", plural: "methods",
		words: []string{"fisher", "bootstrap", "bca"}}
	adjustMethods = &vocab{noun: "adjustment", plural: "adjustments",
		words: []string{"none", "bonferroni", "holm", "hochberg", "hommel", "bh", "by"}}
	dataFormats = &vocab{noun: "dataset format", plural: "formats",
		words: []string{"csv", "tsv", "parquet"}}
	tableFormats = &vocab{noun: "table format", plural: "formats",
		words: []string{"markdown", "csv", "json", "tsv", "latex", "html", "parquet"}}
)

func (v *vocab) accepts(w string) bool  { return contains(v.words, w) }
func (v *vocab) reserves(w string) bool { return contains(v.later, w) }

// unknownDetail explains an unknown word: the suggestion, then every word.
func (v *vocab) unknownDetail(w string) string {
	var b strings.Builder
	b.WriteString("The " + v.noun + " " + quote(w) + " is not known.")
	b.WriteString(didYouMean(w, append(append([]string(nil), v.words...), v.later...)))
	b.WriteString(" Known " + v.plural + ": " + quoteList(v.words))
	if len(v.later) > 0 {
		b.WriteString(" (not available yet: " + quoteList(v.later) + ")")
	}
	b.WriteString(".")
	return b.String()
}

// laterDetail explains a known word that this version does not implement.
func (v *vocab) laterDetail(w string) string {
	return "The " + v.noun + " " + quote(w) + " is not available yet in this version (" +
		v.only + "). Available " + v.plural + ": " + quoteList(v.words) + "."
}

// didYouMean returns ` Did you mean "x"?` for the candidate nearest to w, or
// "" when none is near enough to be a plausible slip.
func didYouMean(w string, candidates []string) string {
	if s := Suggest(w, candidates); s != "" {
		return " Did you mean " + quote(s) + "?"
	}
	return ""
}

// Suggest returns the candidate that a misspelled name w most likely meant:
// the one with the smallest edit distance to w (ignoring case), provided the
// distance is small for the word's length: at most 2, or a third of the
// length for longer words. Ties go to the candidate listed first; "" when
// none is close. The engine uses it for column names too, so that every
// "Did you mean" in concordat follows one rule.
func Suggest(w string, candidates []string) string {
	if w == "" || utf8.RuneCountInString(w) > 64 {
		return ""
	}
	lw := strings.ToLower(w)
	best, bestDist := "", -1
	for _, c := range candidates {
		if c == w {
			continue
		}
		d := levenshtein.Distance(lw, strings.ToLower(c), nil)
		limit := max(2, utf8.RuneCountInString(c)/3)
		if d <= limit && (bestDist < 0 || d < bestDist) {
			best, bestDist = c, d
		}
	}
	return best
}

func contains(list []string, w string) bool {
	for _, s := range list {
		if s == w {
			return true
		}
	}
	return false
}

// quoteList returns `"a", "b", "c"`.
func quoteList(list []string) string {
	q := make([]string, len(list))
	for i, s := range list {
		q[i] = quote(s)
	}
	return strings.Join(q, ", ")
}

// quote writes s as an HCL string literal, so that messages and Describe
// show exactly what a user would type.
func quote(s string) string {
	var b strings.Builder
	b.WriteByte('"')
	for i, r := range s {
		switch {
		case r == '"':
			b.WriteString(`\"`)
		case r == '\\':
			b.WriteString(`\\`)
		case r == '\n':
			b.WriteString(`\n`)
		case r == '\r':
			b.WriteString(`\r`)
		case r == '\t':
			b.WriteString(`\t`)
		case (r == '$' || r == '%') && strings.HasPrefix(s[i+1:], "{"):
			b.WriteRune(r)
			b.WriteRune(r) // "${" and "%{" start templates; doubling escapes them
		case r == utf8.RuneError || r < 0x20 || r == 0x7f:
			b.WriteString(`\u`)
			const hex = "0123456789abcdef"
			b.WriteByte(hex[r>>12&0xf])
			b.WriteByte(hex[r>>8&0xf])
			b.WriteByte(hex[r>>4&0xf])
			b.WriteByte(hex[r&0xf])
		default:
			b.WriteRune(r)
		}
	}
	b.WriteByte('"')
	return b.String()
}
