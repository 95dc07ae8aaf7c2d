# Orchard survey (invented data): does canopy shade rank with fruit quality?
# Run it from the repository root:
#   go run ./cmd/concordat run recipes/orchard.hcl

title = "Canopy shade and fruit quality, 2026 harvest (invented demo data)"
seed  = 20261202

dataset "harvest" {
  path    = "../testdata/demo/orchard_harvest.csv"
  missing = ["", "NA"]

  # Fruit grades are ordinal text: list them from low to high.
  column "grade" {
    levels = ["cull", "standard", "fancy", "extra fancy"]
    label  = "Fruit grade"
  }
  # Labels name the variables in readable tables and figures.
  column "shade_pct" { label = "Canopy shade (%)" }
  column "tree_age" { label = "Tree age (years)" }
  column "sugar_brix" { label = "Sugar content (°Brix)" }
  column "orchard_block" { label = "Orchard block" }
}

pairing "shade_vs_quality" {
  dataset = "harvest"
  x       = ["shade_pct", "tree_age"]
  y       = ["grade", "sugar_brix"]
  missing = "pairwise"
  by      = "orchard_block"
}

ties "midrank" {
  rank      = "average"
  max_share = 0.3
}

# A grade is ordinal with four levels: the Kendall family and Somers' d
# (grade as the dependent variable) speak to it directly.
pairing "shade_vs_grade" {
  dataset = "harvest"
  x       = ["shade_pct"]
  y       = ["grade"]
  by      = "orchard_block"
}

# Older trees sit in the shadier rows: is shade still related to sugar once
# tree age is held fixed?
pairing "shade_vs_sugar" {
  dataset = "harvest"
  x       = ["shade_pct"]
  y       = ["sugar_brix"]
}

test "shade_quality" {
  pairing     = "shade_vs_quality"
  ties        = "midrank"
  measures    = ["spearman", "kendall_b", "pearson"]
  alternative = "two-sided"
  p_value     = "auto"      # exact where affordable, else the best approximation
  adjust      = "holm"      # over the 16 results of each measure

  interval {
    level  = 0.95
    method = "fisher"
  }
}

test "grade_ordinal" {
  pairing      = "shade_vs_grade"
  measures     = ["somers_d", "gamma"]
  p_value      = "permutation"
  permutations = 5000

  interval {
    method    = "bca"
    resamples = 1000
  }
}

test "sugar_given_age" {
  pairing  = "shade_vs_sugar"
  measures = ["spearman"]
  controls = ["tree_age"]
}

table "quality_summary" {
  tests  = ["shade_quality"]
  format = "markdown"
  path   = "out/orchard_quality.md"
  digits = 3
}

table "quality_records" {
  tests = ["shade_quality"]
  path  = "out/orchard_quality.json"
}

table "grade_and_partial" {
  tests = ["grade_ordinal", "sugar_given_age"]
  path  = "out/orchard_grade.md"
}

# For the manuscript: an APA-style LaTeX table (booktabs), one block of rows
# per orchard block, ready for \input.
table "quality_latex" {
  tests   = ["shade_quality"]
  path    = "out/orchard_quality.tex"
  style   = "apa"
  groups  = "blocks"
  columns = ["x", "y", "measure", "n", "estimate", "ci", "p_value", "p_adjusted"]
  caption = "Canopy shade, tree age and fruit quality by orchard block"
  label   = "tab:orchard-quality"
}

# For the team: one HTML page with the APA report of each Spearman result
# and the figures, which need no other file.
table "quality_report" {
  tests   = ["shade_quality"]
  path    = "out/orchard_report.html"
  style   = "apa"
  groups  = "blocks"
  columns = ["x", "y", "measure", "n", "estimate", "ci", "p_value", "p_adjusted", "report", "notes"]
  figures = ["shade_sugar_ranks", "shade_grade"]
}

# The ranks of sugar against the ranks of shade, with the best monotone fit.
figure "shade_sugar_ranks" {
  test = "shade_quality"
  kind = "rank_scatter"
  x    = "shade_pct"
  y    = "sugar_brix"
  path = "out/orchard_shade_sugar.svg"
}

# Fruit grade against shade, the values themselves (grades on their levels).
figure "shade_grade" {
  test = "shade_quality"
  kind = "scatter"
  x    = "shade_pct"
  y    = "grade"
  path = "out/orchard_shade_grade.png"
}
