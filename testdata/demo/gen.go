//go:build ignore

// Command gen writes the invented demo data sets in this folder. The data are
// made up for the example recipes; they describe no real orchard or school.
//
//	go run testdata/demo/gen.go
//
// The generator is deterministic (fixed PCG seeds), so running it again
// rewrites byte-identical files.
package main

import (
	"encoding/csv"
	"fmt"
	"log"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
)

func main() {
	dir := filepath.Join("testdata", "demo")
	if err := writeOrchard(filepath.Join(dir, "orchard_harvest.csv")); err != nil {
		log.Fatal(err)
	}
	if err := writeSurvey(filepath.Join(dir, "school_survey.csv")); err != nil {
		log.Fatal(err)
	}
}

func clamp(v, lo, hi float64) float64 { return math.Max(lo, math.Min(hi, v)) }

// writeOrchard: 3 blocks of trees; shade lowers sugar and grade, age helps a little.
func writeOrchard(path string) error {
	r := rand.New(rand.NewPCG(2026, 12))
	grades := []string{"cull", "standard", "fancy", "extra fancy"}
	blocks := []string{"north", "river", "hill"}
	rows := [][]string{{"tree_id", "orchard_block", "shade_pct", "tree_age", "sugar_brix", "grade"}}
	id := 0
	for bi, block := range blocks {
		for i := 0; i < 120; i++ {
			id++
			shade := 5 * math.Round(clamp(35+18*r.NormFloat64()+5*float64(bi), 0, 90)/5)
			age := math.Round(clamp(12+6*r.NormFloat64(), 2, 40))
			brix := clamp(14.5-0.045*shade+0.05*age+1.1*r.NormFloat64()+0.4*float64(bi), 8, 22)
			score := (brix-10.5)/1.6 + 0.6*r.NormFloat64()
			g := int(clamp(math.Floor(score), 0, 3))
			rec := []string{
				fmt.Sprintf("T%03d", id), block,
				strconv.FormatFloat(shade, 'f', -1, 64),
				strconv.FormatFloat(age, 'f', -1, 64),
				strconv.FormatFloat(math.Round(brix*10)/10, 'f', 1, 64),
				grades[g],
			}
			// A few cells were not recorded in the field.
			switch {
			case r.IntN(60) == 0:
				rec[2] = "NA"
			case r.IntN(70) == 0:
				rec[4] = ""
			case r.IntN(80) == 0:
				rec[5] = "NA"
			}
			rows = append(rows, rec)
		}
	}
	return writeCSV(path, rows)
}

// writeSurvey: pupils in three year groups answer Likert items; sleep and
// homework hours are self-reported.
func writeSurvey(path string) error {
	r := rand.New(rand.NewPCG(7, 2026))
	likert := []string{"strongly disagree", "disagree", "neutral", "agree", "strongly agree"}
	years := []string{"year 7", "year 8", "year 9"}
	rows := [][]string{{"pupil", "year_group", "sleep_hours", "homework_hours", "enjoys_reading", "feels_rested", "screen_time_min"}}
	for i := 0; i < 240; i++ {
		year := years[i%3]
		screen := math.Round(clamp(120+60*r.NormFloat64()+15*float64(i%3), 0, 400)/10) * 10
		sleep := math.Round(clamp(9-0.006*screen+0.7*r.NormFloat64(), 5, 11)*2) / 2
		homework := math.Round(clamp(1+0.3*float64(i%3)+0.8*r.NormFloat64(), 0, 5)*4) / 4
		rested := int(clamp(math.Round(2+1.2*(sleep-8)+0.9*r.NormFloat64()), 0, 4))
		reading := int(clamp(math.Round(2+0.5*homework-0.004*screen+1.0*r.NormFloat64()), 0, 4))
		rec := []string{
			fmt.Sprintf("P%03d", i+1), year,
			strconv.FormatFloat(sleep, 'f', -1, 64),
			strconv.FormatFloat(homework, 'f', -1, 64),
			likert[reading], likert[rested],
			strconv.FormatFloat(screen, 'f', -1, 64),
		}
		if r.IntN(40) == 0 {
			rec[4] = "NA" // item skipped
		}
		if r.IntN(50) == 0 {
			rec[6] = "" // screen time not reported
		}
		rows = append(rows, rec)
	}
	return writeCSV(path, rows)
}

func writeCSV(path string, rows [][]string) error {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	w := csv.NewWriter(f)
	if err := w.WriteAll(rows); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}
