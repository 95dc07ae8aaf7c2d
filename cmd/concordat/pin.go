package main

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"io"
	"os"

	"concordat/io/render"
	"concordat/recipe"
)

// pinRecipe writes the current sha256 of each dataset's file into the
// recipe at path (recipe.Pin: in place, everything else kept), before
// `run --pin` runs it. It returns the exit code to stop with, or exitOK to
// go on. The recipe is replaced atomically, keeping its permissions.
func pinRecipe(path string, given []recipe.Override, stdout, stderr io.Writer) int {
	plan, files, diags := recipe.LoadWith(path, given)
	if diags.HasErrors() {
		printDiags(stderr, path, files, diags)
		fmt.Fprintf(stderr, "concordat: error: %s: %s in the recipe; nothing was pinned or computed\n", path, plural(errorCount(diags), "problem"))
		return exitUsage
	}
	hashes := map[string]string{}
	for _, ds := range plan.Datasets {
		h, err := hashFile(ds.Path)
		if err != nil {
			fmt.Fprintf(stderr, "concordat: error: %s: dataset %q: %v; nothing was pinned or computed\n", path, ds.Name, err)
			return exitFailed
		}
		hashes[ds.Name] = h
	}
	out, changed, diags := recipe.Pin(plan.Source, path, hashes)
	if diags.HasErrors() {
		printDiags(stderr, path, files, diags)
		fmt.Fprintf(stderr, "concordat: error: %s: cannot pin; nothing was pinned or computed\n", path)
		return exitUsage
	}
	if len(changed) == 0 {
		fmt.Fprintf(stdout, "%s: every dataset is pinned to its current sha256 already\n", path)
		return exitOK
	}
	var b render.Batch
	defer b.Abort()
	err := b.Add(path, out)
	if err == nil {
		err = b.Commit()
	}
	if err != nil {
		fmt.Fprintf(stderr, "concordat: error: %s: write the pins: %v; nothing was pinned or computed\n", path, err)
		return exitFailed
	}
	b.Release()
	for _, name := range changed {
		fmt.Fprintf(stdout, "%s: pinned dataset %q to sha256 %s\n", path, name, hashes[name])
	}
	return exitOK
}

func hashFile(path string) (string, error) {
	f, err := os.Open(path)
	if err != nil {
		return "", err
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, f); err != nil {
		return "", err
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}
