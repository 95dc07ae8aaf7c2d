# Paper-ready outputs (invented scenario): labels, styles, layouts, figures.
title = "Soil moisture sensors, spring 2026"

dataset "probes" {
  path = "../data/probes.csv"
  column "site" { label = "Field site" }
  column "wetness" {
    levels = ["dry", "moist", "wet"]
    label  = "Wetness by hand"
  }
  column "probe_a" { label = "Probe A (% VWC)" }
}

pairing "all" {
  dataset = "probes"
  columns = ["probe_a", "probe_b", "wetness"]
  by      = "site"
}

test "agree" {
  pairing  = "all"
  measures = ["spearman", "kendall_b"]
  adjust   = "holm"
}

table "paper" {
  tests   = ["agree"]
  path    = "out/agree.tex"
  style   = "apa"
  groups  = "blocks"
  columns = ["x", "y", "measure", "n", "estimate", "ci", "p_value", "report"]
  caption = "Agreement of the probes"
  label   = "tab:agree"
}

table "matrix" {
  tests  = ["agree"]
  path   = "out/agree_matrix.html"
  layout = "matrix"
  show   = ["n", "p"]
  marks  = true
  figures = ["heat", "ranks"]
}

table "records" {
  tests = ["agree"]
  path  = "out/agree.parquet"
}

figure "heat" {
  test    = "agree"
  kind    = "heatmap"
  measure = "kendall_b"
  group   = "north"
  path    = "out/heat.png"
  width   = 18
}

figure "ranks" {
  test = "agree"
  kind = "rank_scatter"
  y    = "probe_a"
  x    = "probe_b"
  path = "out/ranks.svg"
}
