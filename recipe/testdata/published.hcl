# A published table to reproduce (invented): every form of printed value.
title = "Published table decoding (invented)"

dataset "d" {
  path = "data/d.csv"
}

pairing "p" {
  dataset = "d"
  x       = ["a", "b"]
  y       = ["c"]
  by      = "site"
}

test "t" {
  pairing  = "p"
  measures = ["spearman", "somers_d"]
  adjust   = "holm"
}

test "only_rho" {
  pairing = "p"
}

published "table_3" {
  source = "Invented et al. (2024), Table 3"
  test   = "t"
  stars  = { "***" = 0.001, "*" = 0.05, "**" = 0.01 }
  strict = true

  row {
    x        = "a"
    y        = "c"
    measure  = "spearman"
    estimate = "−.42**"
    p_value  = "p = .003"
    n        = "1,204"
  }
  row { # written the other way round: Somers' d turns with the pair
    x        = "c"
    y        = "b"
    group    = "north"
    measure  = "somers_d_yx"
    estimate = ".12"
    p_value  = "ns"
  }
  row {
    test    = "only_rho"
    x       = "b"
    y       = "c"
    p_value = "< .001"
    n       = 98
  }
}

table "check" {
  reproduction = "table_3"
  path         = "out/check.md"
}

table "both" {
  tests        = ["t"]
  reproduction = "table_3"
  path         = "out/both.html"
}
