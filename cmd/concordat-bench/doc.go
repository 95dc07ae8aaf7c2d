// Command concordat-bench measures concordat end to end on the work of the
// performance issue (issue 4) and, where R is installed, the same work in R,
// and prints a Markdown table of the results for DEVELOPERS.md.
//
// Run it from anywhere inside the repository:
//
//	go run ./cmd/concordat-bench                       # every item, full sizes, with R if installed
//	go run ./cmd/concordat-bench --only spearman_csv,spearman_parquet
//	go run ./cmd/concordat-bench --sizes small --runs 1  # a smoke run: 10⁵ rows, 20 columns
//
// It prints progress on stderr (each run's wall time, its CPU time — user +
// system, children included — and its peak memory) and the report (machine,
// table, notes) on stdout, so `go run ./cmd/concordat-bench > figures.md`
// keeps the table.
//
// # What it does
//
//  1. Generates each data set into bench-data/data/ at the repository root
//     (ignored by git; --out DIR puts everything elsewhere). Every set comes
//     from a PCG stream with a fixed seed, so the same sizes give the same
//     bytes on every machine. A stamp file beside the data names the
//     generator version and shape; data whose stamp matches is reused.
//  2. Writes, for each work item, bench-data/items/NAME/recipe.hcl (the
//     recipe concordat runs) and reference.R (the same work in R).
//  3. Builds concordat once (go build -o TMP/concordat ./cmd/concordat), or
//     takes --concordat PATH, and runs `concordat run recipe.hcl` in the item's
//     folder --runs times (default 3), each from a clean folder (no outputs,
//     no ledger). Each run is timed on the monotonic clock from start to exit
//     and its peak resident set size read from GNU time -v (/usr/bin/time,
//     Debian's time package), or, without it, from the child's rusage.
//     A run still going after --timeout (default 10 min) is killed with its
//     whole process group and reported as a timeout, so a slow item cannot
//     hang the driver.
//  4. When Rscript and the data.table package are installed (and not
//     --no-r), runs reference.R the same number of times, measured the same
//     way, and reports the ratio of the medians, R time / concordat time
//     (above 1: concordat is faster), R's peak memory, and R's own time
//     between reading and writing ("R in memory"). It then compares the two
//     tools' output files pair by pair: the largest difference of the
//     estimates and the largest relative difference of the p-values.
//  5. Prints the table: work item, rows × columns (and the input's size),
//     concordat's median time and peak RSS, R's, the ratio, the agreement, and
//     the target. Unless --keep, it then removes the data and
//     folders that it created (data kept from an earlier run stays).
//
// A run that fails is reported in the table, the driver goes on with the next
// item, and exits 1 at the end; a timeout is a result, not a failure.
//
// # Work items
//
//	name              work                                        full size        small size
//	spearman_csv      Spearman ρ + asymptotic p, from CSV (226 MB)  10 000 000 × 2   100 000 × 2
//	spearman_parquet  the same data, from Parquet (snappy, 92 MB)   10 000 000 × 2   100 000 × 2
//	kendall_ties      Kendall τ_b + asymptotic p, 5 × 7 levels      10 000 000 × 2   100 000 × 2
//	kendall_noties    Kendall τ_b + asymptotic p, no ties           10 000 000 × 2   100 000 × 2
//	matrix_100k_200   Spearman matrix + p, listwise                 100 000 × 200    100 000 × 20
//	matrix_20k_1000   Spearman matrix + p, listwise                 20 000 × 1000    2 000 × 100
//	permutation_1000  Spearman, permutation p (10 000 draws)        1 000 × 2        1 000 × 2
//
// The data: spearman is a 1–100 score (heavy ties) against full-precision
// floats; kendall_ties two Likert-like columns of 5 and 7 levels;
// kendall_noties two permutations of 1…n; the matrices come from a 5-factor
// model rounded to 4 decimals (some ties, no missing values); the
// permutation set is two columns rounded to 2 decimals. Associations are
// weak (ρ of a few thousandths at n = 10⁷), so that the p-values stay far
// from underflow and can be compared between the tools.
//
// concordat reads the CSV except in spearman_parquet; --format parquet makes
// it read a Parquet copy for the Kendall, matrix and permutation items, which
// separates computing from CSV parsing. R always reads the CSV (there is no
// Parquet reader for R here). Both tools write their results to a CSV file.
//
// The R side uses data.table::fread on every core, cor.test(method =
// "spearman", exact = FALSE) or cor(method = "spearman", use =
// "complete.obs") for Spearman, and for Kendall pcaPP::cor.fk (R's own cor()
// is O(n²) for Kendall: hours at n = 10⁷) with the tie-corrected normal
// p-value that cor.test uses. Each script is written beside its recipe: read
// it to see exactly what was timed.
//
// # Reproducing the figures in DEVELOPERS.md
//
//	apt-get update && apt-get install -y time r-base-core r-cran-data.table r-cran-pcapp
//	go run ./cmd/concordat-bench --keep > figures.md
//
// The first run generates about 0.8 GB of data (a minute or two); with --keep
// a second run reuses it. The machine line of the report gives the load
// average before and after: on a shared machine, measure when it is idle and
// compare ratios measured in the same run. The in-memory targets of the
// issue are checked by the go test -bench benchmarks of each package; this
// driver measures what a user waits for, the whole process.
//
// Flags:
//
//	--only NAMES     run only these items (comma-separated)
//	--sizes S        full (default) or small
//	--format F       csv (default) or parquet: what concordat reads for the
//	                 Kendall, matrix and permutation items
//	--no-r           skip R even when it is installed
//	--out DIR        where data and items go (default: bench-data/ at the repository root)
//	--keep           keep what was generated
//	--runs N         runs per command, median reported (default 3)
//	--timeout D      per run (default 10m)
//	--concordat PATH the binary to measure (default: built from the repository)
package main
