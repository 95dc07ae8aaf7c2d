package render

import (
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

// listTree returns every file under root, relative to it, sorted.
func listTree(t *testing.T, root string) []string {
	t.Helper()
	var files []string
	err := filepath.WalkDir(root, func(path string, d os.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if !d.IsDir() {
			rel, _ := filepath.Rel(root, path)
			files = append(files, filepath.ToSlash(rel))
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	slices.Sort(files)
	return files
}

func writeFile(t *testing.T, path, data string) {
	t.Helper()
	if err := os.WriteFile(path, []byte(data), 0o644); err != nil {
		t.Fatal(err)
	}
}

func readFile(t *testing.T, path string) string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

func TestBatchCommit(t *testing.T) {
	dir := t.TempDir()
	old := filepath.Join(dir, "table_1.md")
	writeFile(t, old, "old table\n")
	nested := filepath.Join(dir, "out", "sensors", "table_2.csv")

	var b Batch
	defer b.Abort()
	if err := b.Add(old, []byte("new table\n")); err != nil {
		t.Fatal(err)
	}
	if err := b.Add(nested, []byte("a,b\n1,2\n")); err != nil {
		t.Fatal(err)
	}
	// Staging never touches the destinations.
	if got := readFile(t, old); got != "old table\n" {
		t.Errorf("before Commit, %s = %q", old, got)
	}
	if _, err := os.Stat(nested); !os.IsNotExist(err) {
		t.Errorf("before Commit, %s exists (err %v)", nested, err)
	}
	if err := b.Add(old, []byte("again")); err == nil {
		t.Error("adding a path twice: no error")
	}

	if err := b.Commit(); err != nil {
		t.Fatal(err)
	}
	if got := readFile(t, old); got != "new table\n" {
		t.Errorf("after Commit, %s = %q", old, got)
	}
	if got := readFile(t, nested); got != "a,b\n1,2\n" {
		t.Errorf("after Commit, %s = %q", nested, got)
	}
	info, err := os.Stat(nested)
	if err != nil {
		t.Fatal(err)
	}
	if info.Mode().Perm() != 0o644 {
		t.Errorf("mode %v, want 0644", info.Mode().Perm())
	}
	want := []string{"out/sensors/table_2.csv", "table_1.md"}
	if got := listTree(t, dir); !slices.Equal(got, want) {
		t.Errorf("files after Commit %v, want %v (a temporary left behind?)", got, want)
	}

	b.Abort() // a no-op after Commit
	if got := readFile(t, old); got != "new table\n" {
		t.Errorf("Abort after Commit changed %s to %q", old, got)
	}
	if err := b.Commit(); err == nil {
		t.Error("second Commit: no error")
	}
	if err := b.Add(filepath.Join(dir, "late.md"), nil); err == nil {
		t.Error("Add after Commit: no error")
	}
}

func TestBatchAbort(t *testing.T) {
	dir := t.TempDir()
	old := filepath.Join(dir, "orchard.md")
	writeFile(t, old, "published table\n")

	var b Batch
	if err := b.Add(old, []byte("half-finished")); err != nil {
		t.Fatal(err)
	}
	if err := b.Add(filepath.Join(dir, "out", "new.json"), []byte("[]\n")); err != nil {
		t.Fatal(err)
	}
	// The temporaries are hidden files beside their destinations.
	for _, f := range listTree(t, dir) {
		if f != "orchard.md" && !strings.HasPrefix(filepath.Base(f), ".") {
			t.Errorf("temporary %q is not hidden", f)
		}
	}
	b.Abort()
	b.Abort() // twice is fine

	if got := readFile(t, old); got != "published table\n" {
		t.Errorf("after Abort, %s = %q", old, got)
	}
	if got := listTree(t, dir); !slices.Equal(got, []string{"orchard.md"}) {
		t.Errorf("files after Abort %v, want only orchard.md", got)
	}
}

func TestBatchCommitFailure(t *testing.T) {
	dir := t.TempDir()
	var b Batch
	if err := b.Add(filepath.Join(dir, "a.csv"), []byte("a\n")); err != nil {
		t.Fatal(err)
	}
	blocked := filepath.Join(dir, "b.csv")
	if err := b.Add(blocked, []byte("b\n")); err != nil {
		t.Fatal(err)
	}
	// A non-empty folder where the file should go makes its rename fail.
	if err := os.MkdirAll(filepath.Join(blocked, "inside"), 0o755); err != nil {
		t.Fatal(err)
	}
	err := b.Commit()
	if err == nil || !strings.Contains(err.Error(), "b.csv") {
		t.Fatalf("Commit = %v, want an error naming b.csv", err)
	}
	b.Abort()
	for _, f := range listTree(t, dir) {
		if strings.Contains(f, ".tmp-") {
			t.Errorf("temporary %q left after failed Commit", f)
		}
	}
}

func TestBatchEmpty(t *testing.T) {
	var b Batch
	if err := b.Commit(); err != nil {
		t.Errorf("empty Commit: %v", err)
	}
	b.Abort()
}
