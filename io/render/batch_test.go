package render

import (
	"errors"
	"io/fs"
	"os"
	"path"
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

// hiddenFiles returns the files under root whose names start with a dot:
// temporaries and backups that a Batch left behind.
func hiddenFiles(t *testing.T, root string) []string {
	t.Helper()
	var hidden []string
	for _, f := range listTree(t, root) {
		if strings.HasPrefix(path.Base(f), ".") {
			hidden = append(hidden, f)
		}
	}
	return hidden
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
	if err := b.Add(filepath.Join(dir, ".", "table_1.md"), []byte("again")); err == nil {
		t.Error("adding a path twice, spelled differently: no error")
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
	// Until Release or Undo, the replaced file is kept as a hidden backup
	// beside it, and only that: the new file needs none.
	hidden := hiddenFiles(t, dir)
	if len(hidden) != 1 || !strings.HasPrefix(hidden[0], ".table_1.md.bak-") {
		t.Fatalf("hidden files after Commit %v, want one backup of table_1.md", hidden)
	}
	if got := readFile(t, filepath.Join(dir, hidden[0])); got != "old table\n" {
		t.Errorf("backup holds %q, want the old table", got)
	}

	if err := b.Release(); err != nil {
		t.Fatal(err)
	}
	if err := b.Release(); err != nil { // twice is fine
		t.Errorf("second Release: %v", err)
	}
	if err := b.Undo(); err != nil { // a no-op after Release
		t.Errorf("Undo after Release: %v", err)
	}
	b.Abort() // a no-op after Release
	if got := readFile(t, old); got != "new table\n" {
		t.Errorf("after Release, %s = %q", old, got)
	}
	if got := readFile(t, nested); got != "a,b\n1,2\n" {
		t.Errorf("after Release, %s = %q", nested, got)
	}
	want := []string{"out/sensors/table_2.csv", "table_1.md"}
	if got := listTree(t, dir); !slices.Equal(got, want) {
		t.Errorf("files after Release %v, want %v (a temporary or backup left behind?)", got, want)
	}

	if err := b.Commit(); err == nil {
		t.Error("second Commit: no error")
	}
	if err := b.Add(filepath.Join(dir, "late.md"), nil); err == nil {
		t.Error("Add after Commit: no error")
	}
}

func TestBatchAbortAfterCommit(t *testing.T) {
	// A deferred Abort after a Commit that was neither released nor undone
	// (the run returned early or panicked) undoes the Commit: the previous
	// outputs come back, new files and the folders made for them go.
	dir := t.TempDir()
	dest := filepath.Join(dir, "t.md")
	writeFile(t, dest, "old\n")
	fresh := filepath.Join(dir, "out", "deep", "u.csv")
	var b Batch
	if err := b.Add(dest, []byte("new\n")); err != nil {
		t.Fatal(err)
	}
	if err := b.Add(fresh, []byte("a\n")); err != nil {
		t.Fatal(err)
	}
	if err := b.Commit(); err != nil {
		t.Fatal(err)
	}
	if hidden := hiddenFiles(t, dir); len(hidden) != 1 {
		t.Fatalf("hidden files after Commit %v, want one backup", hidden)
	}
	b.Abort()
	b.Abort()
	if got := readFile(t, dest); got != "old\n" {
		t.Errorf("after Abort, %s = %q, want the old bytes back", dest, got)
	}
	if got := listTree(t, dir); !slices.Equal(got, []string{"t.md"}) {
		t.Errorf("files after Abort %v, want only t.md", got)
	}
	wantNoFolder(t, filepath.Join(dir, "out"))
	// The Batch is finished: Release can no longer keep the new outputs.
	if err := b.Release(); err != nil {
		t.Errorf("Release after Abort: %v", err)
	}
	if got := readFile(t, dest); got != "old\n" {
		t.Errorf("Release after Abort changed %s to %q", dest, got)
	}
}

func TestBatchAbortAfterRelease(t *testing.T) {
	// Only Release keeps the outputs, and after it Abort does nothing.
	dir := t.TempDir()
	dest := filepath.Join(dir, "out", "t.md")
	var b Batch
	if err := b.Add(dest, []byte("new\n")); err != nil {
		t.Fatal(err)
	}
	if err := b.Commit(); err != nil {
		t.Fatal(err)
	}
	if err := b.Release(); err != nil {
		t.Fatal(err)
	}
	b.Abort()
	if got := readFile(t, dest); got != "new\n" {
		t.Errorf("Abort after Release changed %s to %q", dest, got)
	}
	if got := listTree(t, dir); !slices.Equal(got, []string{"out/t.md"}) {
		t.Errorf("files after Release and Abort %v, want only out/t.md", got)
	}
}

// wantNoFolder checks that path does not exist.
func wantNoFolder(t *testing.T, path string) {
	t.Helper()
	if _, err := os.Lstat(path); !errors.Is(err, fs.ErrNotExist) {
		t.Errorf("%s exists (err %v), want the folder the batch made removed", path, err)
	}
}

// commitUndo commits a batch that replaces two existing files and creates
// two new ones, one in a new folder, then undoes it and checks that the
// folder holds exactly what it held before.
func commitUndo(t *testing.T) {
	dir := t.TempDir()
	kept := filepath.Join(dir, "table_1.md")
	writeFile(t, kept, "old table\n")
	private := filepath.Join(dir, "table_2.json")
	writeFile(t, private, "[]\n")
	if err := os.Chmod(private, 0o600); err != nil {
		t.Fatal(err)
	}
	fresh := filepath.Join(dir, "table_3.csv")
	nested := filepath.Join(dir, "out", "table_4.csv")
	before := listTree(t, dir)

	var b Batch
	defer b.Abort()
	for _, p := range []string{kept, fresh, private, nested} {
		if err := b.Add(p, []byte("new "+filepath.Base(p)+"\n")); err != nil {
			t.Fatal(err)
		}
	}
	if err := b.Commit(); err != nil {
		t.Fatal(err)
	}
	if got := readFile(t, fresh); got != "new table_3.csv\n" {
		t.Fatalf("after Commit, %s = %q", fresh, got)
	}

	if err := b.Undo(); err != nil {
		t.Fatal(err)
	}
	if err := b.Undo(); err != nil { // twice is fine
		t.Errorf("second Undo: %v", err)
	}
	if err := b.Release(); err != nil { // a no-op after Undo
		t.Errorf("Release after Undo: %v", err)
	}
	b.Abort()

	if got := readFile(t, kept); got != "old table\n" {
		t.Errorf("after Undo, %s = %q, want the old bytes", kept, got)
	}
	if got := readFile(t, private); got != "[]\n" {
		t.Errorf("after Undo, %s = %q, want the old bytes", private, got)
	}
	if info, err := os.Stat(private); err != nil || info.Mode().Perm() != 0o600 {
		t.Errorf("after Undo, %s: %v, %v; want mode 0600 kept", private, info, err)
	}
	for _, p := range []string{fresh, nested} {
		if _, err := os.Lstat(p); !errors.Is(err, fs.ErrNotExist) {
			t.Errorf("after Undo, %s exists (err %v), want it removed", p, err)
		}
	}
	if got := listTree(t, dir); !slices.Equal(got, before) {
		t.Errorf("files after Undo %v, want %v", got, before)
	}
	wantNoFolder(t, filepath.Join(dir, "out"))
	if err := b.Commit(); err == nil {
		t.Error("Commit after Undo: no error")
	}
}

func TestBatchUndo(t *testing.T) { commitUndo(t) }

// withoutHardLinks makes the Batch take its path for file systems without
// hard links (such as FAT) until the test ends.
func withoutHardLinks(t *testing.T) {
	linkFile = func(oldname, newname string) error {
		return &os.LinkError{Op: "link", Old: oldname, New: newname, Err: errors.ErrUnsupported}
	}
	t.Cleanup(func() { linkFile = os.Link })
}

func TestBatchUndoWithoutHardLinks(t *testing.T) {
	withoutHardLinks(t)
	commitUndo(t)
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
	wantNoFolder(t, filepath.Join(dir, "out"))
}

// commitFailure commits a batch whose third file cannot be moved into place
// (a non-empty folder stands where it should go) and checks that every
// destination is left as it was, with no hidden files.
func commitFailure(t *testing.T) {
	dir := t.TempDir()
	first := filepath.Join(dir, "a.csv")
	writeFile(t, first, "old a\n")
	fresh := filepath.Join(dir, "new", "b.csv")
	blocked := filepath.Join(dir, "c.csv")
	if err := os.MkdirAll(filepath.Join(blocked, "inside"), 0o755); err != nil {
		t.Fatal(err)
	}
	last := filepath.Join(dir, "d.csv")
	writeFile(t, last, "old d\n")

	var b Batch
	defer b.Abort()
	for _, p := range []string{first, fresh, blocked, last} {
		if err := b.Add(p, []byte("new "+filepath.Base(p)+"\n")); err != nil {
			t.Fatal(err)
		}
	}
	before := listTree(t, dir) // with the temporaries
	err := b.Commit()
	if err == nil || !strings.Contains(err.Error(), "c.csv") {
		t.Fatalf("Commit = %v, want an error naming c.csv", err)
	}
	if strings.Contains(err.Error(), "roll back") {
		t.Errorf("Commit = %v; the roll-back should have succeeded", err)
	}
	if got := readFile(t, first); got != "old a\n" {
		t.Errorf("after failed Commit, %s = %q, want the old bytes", first, got)
	}
	if got := readFile(t, last); got != "old d\n" {
		t.Errorf("after failed Commit, %s = %q, want the old bytes", last, got)
	}
	if _, err := os.Lstat(fresh); !errors.Is(err, fs.ErrNotExist) {
		t.Errorf("after failed Commit, %s exists (err %v)", fresh, err)
	}
	if info, err := os.Stat(blocked); err != nil || !info.IsDir() {
		t.Errorf("after failed Commit, folder %s: %v, %v", blocked, info, err)
	}
	if hidden := hiddenFiles(t, dir); len(hidden) != 0 {
		t.Errorf("hidden files after failed Commit: %v (of %v)", hidden, before)
	}

	// The batch is finished; nothing else changes anything.
	b.Abort()
	if err := b.Undo(); err != nil {
		t.Errorf("Undo after failed Commit: %v", err)
	}
	if err := b.Release(); err != nil {
		t.Errorf("Release after failed Commit: %v", err)
	}
	if err := b.Commit(); err == nil {
		t.Error("Commit after failed Commit: no error")
	}
	want := []string{"a.csv", "d.csv"} // and the folder c.csv/inside
	if got := listTree(t, dir); !slices.Equal(got, want) {
		t.Errorf("files after failed Commit %v, want %v", got, want)
	}
	wantNoFolder(t, filepath.Join(dir, "new"))
}

func TestBatchCommitFailure(t *testing.T) { commitFailure(t) }

func TestBatchCommitFailureWithoutHardLinks(t *testing.T) {
	withoutHardLinks(t)
	commitFailure(t)
}

func TestBatchEmpty(t *testing.T) {
	var b Batch
	if err := b.Commit(); err != nil {
		t.Errorf("empty Commit: %v", err)
	}
	if err := b.Undo(); err != nil {
		t.Errorf("empty Undo: %v", err)
	}
	if err := b.Release(); err != nil {
		t.Errorf("empty Release: %v", err)
	}
	b.Abort()
}

func TestBatchBeforeCommit(t *testing.T) {
	// Undo and Release before Commit do nothing: the temporaries stay
	// staged and the destination untouched.
	dir := t.TempDir()
	dest := filepath.Join(dir, "t.md")
	writeFile(t, dest, "old\n")
	var b Batch
	if err := b.Add(dest, []byte("new\n")); err != nil {
		t.Fatal(err)
	}
	if err := b.Undo(); err != nil {
		t.Errorf("Undo before Commit: %v", err)
	}
	if err := b.Release(); err != nil {
		t.Errorf("Release before Commit: %v", err)
	}
	if got := readFile(t, dest); got != "old\n" {
		t.Errorf("%s = %q", dest, got)
	}
	b.Abort()
	if hidden := hiddenFiles(t, dir); len(hidden) != 0 {
		t.Errorf("hidden files after Abort: %v", hidden)
	}
	if err := b.Add(filepath.Join(dir, "u.md"), nil); err == nil {
		t.Error("Add after Abort: no error")
	}
	if err := b.Commit(); err == nil {
		t.Error("Commit after Abort: no error")
	}
}

// commitLostTemporary commits a batch in which the temporary of an existing
// file has vanished, so its rename fails after the previous file was backed
// up, and checks that every destination is left as it was.
func commitLostTemporary(t *testing.T) {
	dir := t.TempDir()
	first := filepath.Join(dir, "a.md")
	writeFile(t, first, "old a\n")
	fresh := filepath.Join(dir, "b.md")
	broken := filepath.Join(dir, "c.md")
	writeFile(t, broken, "old c\n")

	var b Batch
	defer b.Abort()
	for _, p := range []string{first, fresh, broken} {
		if err := b.Add(p, []byte("new\n")); err != nil {
			t.Fatal(err)
		}
	}
	if err := os.Remove(b.staged[2].temp); err != nil {
		t.Fatal(err)
	}
	err := b.Commit()
	if err == nil || !strings.Contains(err.Error(), "c.md") || strings.Contains(err.Error(), "roll back") {
		t.Fatalf("Commit = %v, want an error naming c.md and a clean roll-back", err)
	}
	for p, want := range map[string]string{first: "old a\n", broken: "old c\n"} {
		if got := readFile(t, p); got != want {
			t.Errorf("after failed Commit, %s = %q, want %q", p, got, want)
		}
	}
	if got, want := listTree(t, dir), []string{"a.md", "c.md"}; !slices.Equal(got, want) {
		t.Errorf("files after failed Commit %v, want %v", got, want)
	}
}

func TestBatchLostTemporary(t *testing.T) { commitLostTemporary(t) }

func TestBatchLostTemporaryWithoutHardLinks(t *testing.T) {
	withoutHardLinks(t)
	commitLostTemporary(t)
}

func TestBatchKeepsFoldersInUse(t *testing.T) {
	// Abort removes only the folders the batch made, and only when they
	// are empty: a folder that existed stays, and so does a new one that
	// something else has put a file in meanwhile.
	dir := t.TempDir()
	existing := filepath.Join(dir, "results")
	if err := os.Mkdir(existing, 0o755); err != nil {
		t.Fatal(err)
	}
	var b Batch
	for _, p := range []string{
		filepath.Join(existing, "a", "b", "t.csv"),
		filepath.Join(existing, "a", "c", "u.csv"),
		filepath.Join(existing, "v.csv"),
		filepath.Join(dir, "other", "w.csv"),
	} {
		if err := b.Add(p, []byte("x\n")); err != nil {
			t.Fatal(err)
		}
	}
	if got := b.made; len(got) != 4 {
		t.Errorf("batch made folders %q, want results/a, results/a/b, results/a/c and other", got)
	}
	writeFile(t, filepath.Join(dir, "other", "notes.txt"), "someone else's\n")
	b.Abort()
	for _, f := range []string{"results/a", "results/a/b", "results/a/c"} {
		wantNoFolder(t, filepath.Join(dir, filepath.FromSlash(f)))
	}
	if info, err := os.Stat(existing); err != nil || !info.IsDir() {
		t.Errorf("folder %s that was there before: %v, %v", existing, info, err)
	}
	if got, want := listTree(t, dir), []string{"other/notes.txt"}; !slices.Equal(got, want) {
		t.Errorf("files after Abort %v, want %v", got, want)
	}
}

func TestBatchAddIntoFile(t *testing.T) {
	// A destination below a file cannot be staged, and nothing is left.
	dir := t.TempDir()
	writeFile(t, filepath.Join(dir, "plain"), "x\n")
	var b Batch
	defer b.Abort()
	if err := b.Add(filepath.Join(dir, "plain", "sub", "t.csv"), nil); err == nil {
		t.Error("Add below a file: no error")
	}
	if got := listTree(t, dir); !slices.Equal(got, []string{"plain"}) {
		t.Errorf("files after failed Add %v, want only plain", got)
	}
}

func TestBatchFolderSyncFailure(t *testing.T) {
	// Once every file is renamed into place, a folder that cannot be synced
	// does not fail the Commit or take the outputs back.
	syncFolder = func(string) error { return errors.New("sync failed") }
	t.Cleanup(func() { syncFolder = syncDir })
	dir := t.TempDir()
	dest := filepath.Join(dir, "t.md")
	writeFile(t, dest, "old\n")
	var b Batch
	defer b.Abort()
	if err := b.Add(dest, []byte("new\n")); err != nil {
		t.Fatal(err)
	}
	if err := b.Commit(); err != nil {
		t.Fatalf("Commit with failing folder syncs: %v", err)
	}
	if got := readFile(t, dest); got != "new\n" {
		t.Errorf("after Commit, %s = %q", dest, got)
	}
	if err := b.Undo(); err != nil {
		t.Fatalf("Undo with failing folder syncs: %v", err)
	}
	if got := readFile(t, dest); got != "old\n" {
		t.Errorf("after Undo, %s = %q", dest, got)
	}
}
