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
  }
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
