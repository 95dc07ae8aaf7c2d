package dataset_test

import (
	"context"
	"fmt"

	"concordat/io/dataset"
)

// Reading an invented table of weather stations: "-" marks a missing
// reading, and the sky column is ordinal.
func ExampleRead() {
	tab, err := dataset.Read(context.Background(), dataset.Spec{
		Path:    "testdata/sensors.tsv",
		Format:  dataset.TSV,
		Missing: []string{"-"},
		Columns: []dataset.ColumnSpec{
			{Name: "station", Kind: dataset.Label},
			{Name: "humidity_pct", Kind: dataset.Numeric},
			{Name: "sky", Kind: dataset.Ordinal, Levels: []string{"clear", "overcast"}},
		},
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(tab.Rows, "rows, sha256", tab.SHA256[:12])
	for _, c := range tab.Columns {
		if c.Kind == dataset.Label {
			fmt.Printf("%s %q\n", c.Name, c.Labels)
		} else {
			fmt.Println(c.Name, c.Values)
		}
	}
	// Output:
	// 4 rows, sha256 3346e1f52c90
	// station ["ridge" "valley" "creek" "mill, upper"]
	// humidity_pct [81 NaN 95.5 77]
	// sky [1 2 NaN 1]
}

func ExampleCellError() {
	_, err := dataset.Read(context.Background(), dataset.Spec{
		Path:   "testdata/orchard_harvest.csv",
		Format: dataset.CSV,
		Columns: []dataset.ColumnSpec{
			{Name: "grade", Kind: dataset.Ordinal, Levels: []string{"cull", "standard", "fancy"}},
		},
	})
	fmt.Println(err)
	// Output:
	// testdata/orchard_harvest.csv: row 3 (line 4), column "grade": value "extra fancy" is not one of the declared levels "cull", "standard", "fancy"
}
