# Orchard survey (invented data): does canopy shade rank with fruit grade?
title = "Canopy shade and fruit grade, 2026 harvest"
seed  = 20261202

dataset "harvest" {
  path    = "data/orchard_harvest.csv"
  sha256  = "9F2C1A0B3D4E5F60718293A4B5C6D7E8F90A1B2C3D4E5F60718293A4B5C6D7E8"
  missing = ["", "NA", "-"]

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
  max_share = 0.25
}

test "shade_grade" {
  pairing      = "shade_vs_quality"
  ties         = "midrank"
  measures     = ["spearman", "kendall_b"]
  alternative  = "two-sided"
  p_value      = "auto"
  permutations = 20000
  interval {
    level  = 0.9
    method = "fisher"
  }
  adjust = "none"
}

table "table_2" {
  tests  = ["shade_grade"]
  format = "markdown"
  path   = "out/table_2.md"
  digits = 4
}
