# School wellbeing survey (invented data): how do sleep, screen time, homework
# and two Likert items rank against one another?
#   go run ./cmd/concordat run recipes/school_survey.hcl

title = "Sleep, screens and study: pupil survey (invented demo data)"

dataset "survey" {
  path    = "../testdata/demo/school_survey.csv"
  missing = ["", "NA"]

  column "enjoys_reading" {
    levels = ["strongly disagree", "disagree", "neutral", "agree", "strongly agree"]
    label  = "Enjoys reading"
  }
  column "feels_rested" {
    levels = ["strongly disagree", "disagree", "neutral", "agree", "strongly agree"]
    label  = "Feels rested"
  }
  column "sleep_hours" { label = "Sleep (h)" }
  column "screen_time_min" { label = "Screen time (min)" }
  column "homework_hours" { label = "Homework (h)" }
}

# Every pair among these columns: a correlation matrix in long form.
pairing "wellbeing" {
  dataset = "survey"
  columns = ["sleep_hours", "screen_time_min", "homework_hours", "enjoys_reading", "feels_rested"]
  missing = "listwise"
}

# Likert items carry many ties: Kendall's tau-b is reported beside rho.
test "wellbeing_matrix" {
  pairing  = "wellbeing"
  measures = ["spearman", "kendall_b"]
  adjust   = "bh"   # Benjamini-Hochberg over the 10 pairs of each measure
}

table "matrix_long" {
  tests = ["wellbeing_matrix"]
  path  = "out/school_wellbeing.csv"
}

table "matrix_readable" {
  tests = ["wellbeing_matrix"]
  path  = "out/school_wellbeing.md"
}

# The same results as APA correlation matrices (lower triangle, one per
# measure), significance marked and explained under each table.
table "matrix_apa" {
  tests  = ["wellbeing_matrix"]
  path   = "out/school_matrix.md"
  layout = "matrix"
  style  = "apa"
  marks  = true
}

# Typed result records for any Arrow or Parquet tool.
table "matrix_records" {
  tests = ["wellbeing_matrix"]
  path  = "out/school_wellbeing.parquet"
}

figure "wellbeing_heatmap" {
  test    = "wellbeing_matrix"
  kind    = "heatmap"
  measure = "spearman"
  path    = "out/school_heatmap.png"
}
