title = "Orchard, with mistakes"
seed  = "42"

dataset "orchard" {
  pth = "data/orchard.csv"
}

pairing "shade" {
  x       = ["shade_pct"]
  dataset = "orchrd"
  y       = ["grade", "grade"]
}

ties "midrank" {
  rank = "avrage"
}

test "t" {
  pairing     = "shade"
  ties        = "midrnk"
  alternative = "greatr"
}

# a table, misspelled
tabel "t2" {
  tests = ["t"]
}
