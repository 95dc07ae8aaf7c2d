package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
)

// shape is a data set's rows and columns.
type shape struct{ rows, cols int }

// item is one unit of benchmark work: a data set, the recipe that runs on
// it, the same work as an R script, and the target for it.
type item struct {
	name   string
	what   string // the work, for the table
	kind   dataKind
	full   shape
	small  shape
	format string // "csv" or "parquet": what concordat reads; "" follows --format
	// measure is the recipe's measure word; matrix items pair every column
	// with every other; permutations > 0 asks for a permutation p-value.
	measure      string
	matrix       bool
	permutations int
	target       string // the target and reference figure
}

// items lists the work of issue 4 in the order of its table of targets.
var items = []item{
	{
		name: "spearman_csv", what: "Spearman ρ + p, whole process from CSV",
		kind: kindSpearman, full: shape{10_000_000, 2}, small: shape{100_000, 2}, format: "csv",
		measure: "spearman",
		target:  "≤ 3 s, ≤ 600 MiB (issue's reference 9.6 s, 1.1 GiB)",
	},
	{
		name: "spearman_parquet", what: "Spearman ρ + p, whole process from Parquet (snappy)",
		kind: kindSpearman, full: shape{10_000_000, 2}, small: shape{100_000, 2}, format: "parquet",
		measure: "spearman",
		target:  "≤ 2.5 s, ≤ 600 MiB",
	},
	{
		name: "kendall_ties", what: "Kendall τ_b + p, heavy ties (5 × 7 levels)",
		kind: kindLikert, full: shape{10_000_000, 2}, small: shape{100_000, 2},
		measure: "kendall_b",
		target:  "≤ 2 s in memory (reference 4.9 s)",
	},
	{
		name: "kendall_noties", what: "Kendall τ_b + p, no ties",
		kind: kindDistinct, full: shape{10_000_000, 2}, small: shape{100_000, 2},
		measure: "kendall_b",
		target:  "≤ 2 s in memory (reference 10.5 s)",
	},
	{
		name: "matrix_100k_200", what: "Spearman matrix + p, listwise",
		kind: kindMatrix, full: shape{100_000, 200}, small: shape{100_000, 20},
		measure: "spearman", matrix: true,
		target: "≤ 2 s in memory (reference 7.1 s)",
	},
	{
		name: "matrix_20k_1000", what: "Spearman matrix + p, listwise",
		kind: kindMatrix, full: shape{20_000, 1000}, small: shape{2_000, 100},
		measure: "spearman", matrix: true,
		target: "≤ 6 s in memory (reference 10.5 s)",
	},
	{
		name: "permutation_1000", what: "Spearman permutation test, 10 000 permutations",
		kind: kindPermutation, full: shape{1000, 2}, small: shape{1000, 2},
		measure: "spearman", permutations: 10_000,
		target: "≤ 0.04 s in memory (reference 0.24 s)",
	},
}

// findItem returns the item called name.
func findItem(name string) (item, bool) {
	for _, it := range items {
		if it.name == name {
			return it, true
		}
	}
	return item{}, false
}

// itemNames lists every item's name, for messages.
func itemNames() string {
	names := make([]string, len(items))
	for i, it := range items {
		names[i] = it.name
	}
	return strings.Join(names, ", ")
}

// dataSet is the item's data set at the given sizes ("full" or "small").
func (it item) dataSet(sizes string) dataSet {
	s := it.full
	if sizes == "small" {
		s = it.small
	}
	return dataSet{kind: it.kind, rows: s.rows, cols: s.cols}
}

// readsParquet says whether concordat reads the item's Parquet file, given
// the --format flag (which applies to items without a format of their own).
func (it item) readsParquet(format string) bool {
	if it.format != "" {
		return it.format == "parquet"
	}
	return format == "parquet"
}

// columnNames are the names generate gives the data set's columns.
func (d dataSet) columnNames() []string {
	if d.kind != kindMatrix {
		return []string{"x", "y"}
	}
	names := make([]string, d.cols)
	width := len(fmt.Sprint(d.cols))
	for j := range names {
		names[j] = fmt.Sprintf("v%0*d", width, j+1)
	}
	return names
}

// recipeText is the item's recipe. dataPath is the data file, relative to
// the recipe's folder (with forward slashes). Every big item asks for the
// asymptotic p-value, the one R's cor.test gives at these n; the table is
// CSV so that every digit can be compared with R's.
func (it item) recipeText(d dataSet, dataPath string) string {
	var b strings.Builder
	fmt.Fprintf(&b, "# concordat-bench: %s (generated; rewritten on every run)\n", it.name)
	fmt.Fprintf(&b, "title = %q\n", fmt.Sprintf("%s, %d rows × %d columns (benchmark)", it.what, d.rows, d.cols))
	fmt.Fprintf(&b, "seed  = %d\n\n", benchSeed)
	fmt.Fprintf(&b, "dataset \"data\" {\n  path = %q\n}\n\n", dataPath)
	b.WriteString("pairing \"work\" {\n  dataset = \"data\"\n")
	if it.matrix {
		b.WriteString("  columns = [")
		for j, n := range d.columnNames() {
			if j%10 == 0 {
				b.WriteString("\n    ")
			} else {
				b.WriteString(" ")
			}
			fmt.Fprintf(&b, "%q,", n)
		}
		b.WriteString("\n  ]\n  missing = \"listwise\"\n")
	} else {
		b.WriteString("  x       = [\"x\"]\n  y       = [\"y\"]\n")
	}
	b.WriteString("}\n\n")
	b.WriteString("test \"bench\" {\n  pairing  = \"work\"\n")
	fmt.Fprintf(&b, "  measures = [%q]\n", it.measure)
	if it.permutations > 0 {
		fmt.Fprintf(&b, "  p_value      = \"permutation\"\n  permutations = %d\n", it.permutations)
	} else {
		b.WriteString("  p_value  = \"asymptotic\"\n")
	}
	b.WriteString("}\n\n")
	b.WriteString("table \"result\" {\n  tests = [\"bench\"]\n  path  = \"out/result.csv\"\n}\n")
	return b.String()
}

// rScript is the same work in R, reading the CSV at csvPath (relative to the
// script's folder): data.table's fread, the computation, and fwrite of the
// estimates and p-values to reference.csv (x, y, estimate, p_value). It prints
// "compute_seconds S", the time between reading and writing.
//
//   - Spearman: cor.test(method = "spearman", exact = FALSE), R's asymptotic
//     t test on n − 2 degrees of freedom, as the recipe's p_value = "asymptotic".
//   - Kendall τ_b: R's cor() is O(n²) for Kendall, hopeless at n = 10⁷, so τ_b
//     comes from pcaPP::cor.fk (Knight's O(n log n) algorithm), and the
//     p-value from the normal approximation with the tie-corrected variance
//     of S written out as cor.test computes it (Kendall 1970, ch. 4).
//   - Matrices: cor(method = "spearman", use = "complete.obs") (listwise),
//     then the t test of every pair, vectorised.
//   - Permutations: rank and centre once, then each permutation is
//     sample.int and one dot product (R's cor() costs ~5× more per call
//     through its argument checks), p = (b + 1)/(m + 1) as concordat
//     computes it.
func (it item) rScript(csvPath string) string {
	var b strings.Builder
	fmt.Fprintf(&b, "# concordat-bench: %s (generated; the work of recipe.hcl, in R)\n", it.name)
	b.WriteString("suppressPackageStartupMessages(library(data.table))\n")
	b.WriteString("setDTthreads(0L)  # every core, as concordat uses\n")
	fmt.Fprintf(&b, "d <- fread(%q)\n", csvPath)
	b.WriteString("t0 <- proc.time()[[\"elapsed\"]]\n")
	switch {
	case it.permutations > 0:
		fmt.Fprintf(&b, `set.seed(%d)
rx <- rank(d$x); ry <- rank(d$y); rx <- rx - mean(rx); ry <- ry - mean(ry)
den <- sqrt(sum(rx^2) * sum(ry^2)); obs <- sum(rx * ry) / den
n <- length(rx); m <- %dL; b <- 0L
for (i in seq_len(m)) if (abs(sum(rx * ry[sample.int(n)])) / den >= abs(obs)) b <- b + 1L
res <- data.table(x = "x", y = "y", estimate = obs, p_value = (b + 1) / (m + 1))
`, benchSeed, it.permutations)
	case it.matrix:
		b.WriteString(`m <- as.matrix(d)
r <- cor(m, method = "spearman", use = "complete.obs")
n <- sum(complete.cases(m))
ij <- which(upper.tri(r), arr.ind = TRUE)
est <- r[ij]
p <- 2 * pt(-abs(est * sqrt((n - 2) / (1 - est^2))), n - 2)
res <- data.table(x = colnames(m)[ij[, 1]], y = colnames(m)[ij[, 2]], estimate = est, p_value = p)
`)
	case it.measure == "kendall_b":
		b.WriteString(`n <- as.numeric(nrow(d))
tau <- pcaPP::cor.fk(d$x, d$y)
tx <- as.numeric(d[, .N, by = x]$N); ty <- as.numeric(d[, .N, by = y]$N)
n0 <- n * (n - 1) / 2
s <- tau * sqrt((n0 - sum(tx * (tx - 1) / 2)) * (n0 - sum(ty * (ty - 1) / 2)))
v <- (n * (n - 1) * (2 * n + 5) - sum(tx * (tx - 1) * (2 * tx + 5)) - sum(ty * (ty - 1) * (2 * ty + 5))) / 18 +
  sum(tx * (tx - 1) * (tx - 2)) * sum(ty * (ty - 1) * (ty - 2)) / (9 * n * (n - 1) * (n - 2)) +
  sum(tx * (tx - 1)) * sum(ty * (ty - 1)) / (2 * n * (n - 1))
res <- data.table(x = "x", y = "y", estimate = tau, p_value = 2 * pnorm(-abs(s / sqrt(v))))
`)
	default:
		b.WriteString(`ct <- cor.test(d$x, d$y, method = "spearman", exact = FALSE)
res <- data.table(x = "x", y = "y", estimate = unname(ct$estimate), p_value = ct$p.value)
`)
	}
	b.WriteString("t1 <- proc.time()[[\"elapsed\"]]\n")
	b.WriteString("fwrite(res, \"reference.csv\")\n")
	b.WriteString("cat(sprintf(\"compute_seconds %.6f\\n\", t1 - t0))\n")
	return b.String()
}

// writeItem writes dir/recipe.hcl and dir/reference.R for the item, reading
// the data set from dataDir; parquet says whether concordat reads the
// Parquet file (R always reads the CSV: it has no Parquet reader here).
func writeItem(dir, dataDir string, it item, d dataSet, parquet bool) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	dataFile := d.csvPath(dataDir)
	if parquet {
		dataFile = d.parquetPath(dataDir)
	}
	rel := func(p string) (string, error) {
		r, err := filepath.Rel(dir, p)
		return filepath.ToSlash(r), err
	}
	dataRel, err := rel(dataFile)
	if err != nil {
		return err
	}
	csvRel, err := rel(d.csvPath(dataDir))
	if err != nil {
		return err
	}
	if err := os.WriteFile(filepath.Join(dir, "recipe.hcl"), []byte(it.recipeText(d, dataRel)), 0o644); err != nil {
		return err
	}
	return os.WriteFile(filepath.Join(dir, "reference.R"), []byte(it.rScript(csvRel)), 0o644)
}
