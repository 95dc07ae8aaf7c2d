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

test "shade_quality" {
  pairing     = "shade_vs_quality"
  ties        = "midrank"
  measures    = ["spearman", "kendall_b", "pearson"]
  alternative = "two-sided"
  p_value     = "asymptotic"

  interval {
    level  = 0.95
    method = "fisher"
  }
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
