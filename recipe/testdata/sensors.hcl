# Sensor network (invented): how do the stations' daily readings rank together?
dataset "stations" {
  path = "/srv/field/stations.parquet"
}

pairing "matrix" {
  dataset = "stations"
  columns = ["soil_moisture", "air_temp", "wind", "leaf_wetness"]
  missing = "listwise"
}

test "all_pairs" {
  pairing  = "matrix"
  measures = ["spearman", "kendall_b", "pearson"]
}

table "matrix_csv" {
  tests = ["all_pairs"]
  path  = "out/matrix.csv"
}

table "matrix_json" {
  tests = ["all_pairs"]
  path  = "out/matrix.json"
}
