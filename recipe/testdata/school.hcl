# School survey (invented): do homework hours rank with reported confidence?
title = "Homework and confidence"

dataset "survey" {
  path    = "data/school_survey.txt"
  format  = "tsv"
  missing = []
  where   = year >= "8" && (reading_score > 0 || # a score of 0 means absent
                           homework_hours <= 2)

  column "confidence" {
    levels = ["very low", "low", "medium", "high", "very high"]
  }
  column "year" {
    levels = ["7", "8", "9"]
  }
}

ties "dense" {
  rank = "dense"
}

pairing "homework" {
  dataset = "survey"
  x       = ["homework_hours"]
  y       = ["confidence", "reading_score"]
  by      = "year"
}

test "one_sided" {
  pairing     = "homework"
  ties        = "dense"
  alternative = "greater"
  p_value     = "asymptotic"
}

test "plain" {
  pairing = "homework"
}

table "summary" {
  tests = ["one_sided", "plain"]
  path  = "results/summary.md"
}
