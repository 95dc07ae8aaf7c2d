//go:build windows

package render

// syncDir does nothing on Windows. There, File.Sync is FlushFileBuffers,
// which fails with "Access is denied" on a folder opened as os.Open opens
// it (read-only), and Windows offers no documented way to flush a folder's
// entries; trying would only make every Commit report an error. NTFS
// journals the renames itself.
func syncDir(dir string) error { return nil }
