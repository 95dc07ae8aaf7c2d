# Re-checking a published table — AN INVENTED SCENARIO.
#
# The "published" numbers below stand for Table 2 of an invented paper,
# "Okafor & Lindqvist (2025), Sleep, screens and study in three year groups".
# No such paper exists: the values were made for this demo from the invented
# school survey (testdata/demo/school_survey.csv), most of them with this
# recipe's conventions and some, on purpose, with others (listwise deletion,
# the no-ties formula, a one-sided p-value, Pearson's r, tau-a, truncated
# digits, n before deletion, and one typo), so that the reproduction report
# has something to find and to explain.
#   go run ./cmd/concordat run recipes/school_replication.hcl

title = "Re-checking Table 2 of an invented paper (invented demo data, invented published table)"

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

pairing "sleep_and_screens" {
  dataset = "survey"
  x       = ["sleep_hours", "screen_time_min"]
  y       = ["feels_rested", "enjoys_reading", "homework_hours"]
  missing = "pairwise"
}

# The analysis as we would run it: midranks, pairwise deletion, two-sided
# p-values, no adjustment.
test "table_2" {
  pairing  = "sleep_and_screens"
  measures = ["spearman", "kendall_b"]
}

# The table as the (invented) paper printed it, digit for digit. Its note
# read "*p < .05. **p < .01. ***p < .001."
published "table_2" {
  source = "Okafor & Lindqvist (2025, invented), Table 2"
  test   = "table_2"
  stars  = { "*" = 0.05, "**" = 0.01, "***" = 0.001 }
  strict = false # true would make `concordat run` exit 1 unless every value reproduces

  row { # printed after listwise deletion over the five variables
    x        = "sleep_hours"
    y        = "feels_rested"
    measure  = "spearman"
    estimate = ".70***"
    p_value  = "< .001"
    n        = 235
  }
  row { # as this recipe computes it
    x        = "sleep_hours"
    y        = "feels_rested"
    measure  = "kendall_b"
    estimate = ".61***"
    p_value  = "< .001"
    n        = 240
  }
  row { # the no-ties formula 1 − 6Σd²/(n(n²−1)) applied to tied data
    x        = "sleep_hours"
    y        = "enjoys_reading"
    measure  = "spearman"
    estimate = ".08"
    p_value  = "p = .216"
    n        = 239
  }
  row { # a one-sided p-value
    x        = "sleep_hours"
    y        = "homework_hours"
    measure  = "spearman"
    estimate = ".01"
    p_value  = ".416"
    n        = 240
  }
  row { # Pearson's r, printed as if it were Spearman's rho (Unicode minus)
    x        = "screen_time_min"
    y        = "enjoys_reading"
    measure  = "spearman"
    estimate = "−.29***"
    p_value  = "< .001"
    n        = 235
  }
  row { # tau-a, printed as tau-b
    x        = "screen_time_min"
    y        = "enjoys_reading"
    measure  = "kendall_b"
    estimate = "−.18***"
    p_value  = "<.001"
    n        = 235
  }
  row { # digits cut off instead of rounded (−.2368 printed as −.23)
    x        = "screen_time_min"
    y        = "feels_rested"
    measure  = "kendall_b"
    estimate = "-.23***"
    n        = 235
  }
  row { # n is the number of pupils, not of complete pairs
    x        = "screen_time_min"
    y        = "feels_rested"
    measure  = "spearman"
    estimate = "−.31***"
    p_value  = "p < .001"
    n        = "240"
  }
  row { # a typo in the paper (.03 printed as .30): nothing reproduces it
    x        = "sleep_hours"
    y        = "homework_hours"
    measure  = "kendall_b"
    estimate = ".30"
    p_value  = "ns"
  }
  row { # as this recipe computes it
    x        = "screen_time_min"
    y        = "homework_hours"
    measure  = "spearman"
    estimate = "0.04"
    p_value  = "p = .50"
    n        = 235
  }
}

# The reproduction report: for the reader (APA numbers), and as records.
table "table_2_check" {
  reproduction = "table_2"
  path         = "out/school_replication.md"
  style        = "apa"
}

# For a reply to reviewers: the same report as a booktabs table.
table "table_2_latex" {
  reproduction = "table_2"
  path         = "out/school_replication.tex"
  style        = "apa"
  caption      = "Reproduction of Table 2 of Okafor and Lindqvist (2025, invented)"
  label        = "tab:reproduction"
}

table "table_2_records" {
  reproduction = "table_2"
  path         = "out/school_replication.json"
}

# One HTML page: our results, then the reproduction report as a section.
table "table_2_report" {
  tests        = ["table_2"]
  reproduction = "table_2"
  path         = "out/school_replication.html"
  style        = "apa"
  columns      = ["x", "y", "measure", "n", "estimate", "ci", "p_value", "notes"]
}
