package main

import (
	"context"
	"fmt"
	"io"
	"math"
	"os"
	"os/signal"
	"path/filepath"
	"strconv"
	"strings"

	"concordat/io/dataset"
	"concordat/io/render"
	"concordat/recipe"
)

// inspectLabels is how many labels of a text column inspect lists.
const inspectLabels = 8

func cmdInspect(args []string, stdout, stderr io.Writer) int {
	cmd := newCommand("inspect", "Describe each column of a data file (CSV, TSV or Parquet): its type as a run would\nread it, the count of values and of missing ones, distinct values, the share of tied\nvalues, and the range or the labels seen. With --recipe, print a recipe skeleton\nfor the file instead, to edit and run.")
	cmd.args = "FILE"
	asRecipe := cmd.fs.Bool("recipe", false, "print a ready-to-edit recipe skeleton for the file")
	format := cmd.fs.String("format", "", "csv, tsv or parquet (default: from the file's extension)")
	missing := cmd.fs.StringSlice("missing", []string{"", "NA"}, "cells read as missing in CSV and TSV (comma-separated)")
	if code := cmd.parse(args, stdout, stderr); code >= 0 {
		return code
	}
	if cmd.fs.NArg() != 1 {
		fmt.Fprintf(stderr, "concordat: error: inspect takes one data file\n")
		cmd.usage(stderr)
		return exitUsage
	}
	path := cmd.fs.Arg(0)
	word := *format
	if word == "" {
		word = strings.TrimPrefix(strings.ToLower(filepath.Ext(path)), ".")
	}
	f, err := dataset.ParseFormat(word)
	if err != nil {
		fmt.Fprintf(stderr, "concordat: error: %s: the format cannot be told from the extension %q; give --format csv, tsv or parquet\n", path, filepath.Ext(path))
		return exitUsage
	}
	if _, err := os.Stat(path); err != nil {
		fmt.Fprintf(stderr, "concordat: error: %v\n", err)
		return exitUsage
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	prof, err := dataset.Profile(ctx, path, f, *missing)
	if err != nil {
		fmt.Fprintf(stderr, "concordat: error: %v\n", err)
		return exitFailed
	}
	if *asRecipe {
		var cols []recipe.SkeletonColumn
		for _, c := range prof.Columns {
			cols = append(cols, recipe.SkeletonColumn{Name: c.Name, Numeric: c.Type == dataset.TypeNumber, Labels: c.Labels, Distinct: c.Distinct})
		}
		if err := recipe.WriteSkeleton(stdout, filepath.ToSlash(path), f.String(), cols); err != nil {
			fmt.Fprintf(stderr, "concordat: error: %v\n", err)
			return exitFailed
		}
		return exitOK
	}
	if err := render.Encode(stdout, profileTable(prof), render.Markdown, 3); err != nil {
		fmt.Fprintf(stderr, "concordat: error: %v\n", err)
		return exitFailed
	}
	return exitOK
}

// profileTable lays a file's profile out as a table, one row per column.
func profileTable(p *dataset.FileProfile) *render.Table {
	t := &render.Table{
		Title:   fmt.Sprintf("%s: %d rows, sha256 %s", p.Path, p.Rows, p.SHA256),
		Columns: []string{"column", "type", "n", "missing", "distinct", "tied", "range or labels"},
	}
	for _, c := range p.Columns {
		typ := c.Type.String()
		if c.Stored != "" {
			typ += " (" + c.Stored + ")"
		}
		tied := render.NoText()
		if !math.IsNaN(c.TieShare) {
			tied = render.Text(strconv.FormatFloat(100*c.TieShare, 'f', 0, 64) + "%")
		}
		var what string
		switch {
		case c.Repeated:
			what = "the header repeats this name: not read"
		case c.Type == dataset.TypeNumber:
			what = strconv.FormatFloat(c.Min, 'g', -1, 64) + " to " + strconv.FormatFloat(c.Max, 'g', -1, 64)
		case c.Type == dataset.TypeText:
			ls := c.Labels
			more := ""
			if len(ls) > inspectLabels {
				more = fmt.Sprintf(", … (%d more)", len(ls)-inspectLabels)
				ls = ls[:inspectLabels]
			}
			what = strings.Join(quoteAll(ls), ", ") + more
		case c.Type == dataset.TypeOther:
			what = "not read by concordat"
		}
		t.Rows = append(t.Rows, []render.Cell{
			render.Text(c.Name), render.Text(typ), render.Int(int64(c.N)), render.Int(int64(c.Missing)),
			render.Int(int64(c.Distinct)), tied, render.Text(what),
		})
	}
	t.Notes = []string{"tied: the share of values that equal another value (ties shape the rank tests and their p-values)."}
	return t
}

func quoteAll(ls []string) []string {
	out := make([]string, len(ls))
	for i, l := range ls {
		out[i] = strconv.Quote(l)
	}
	return out
}
