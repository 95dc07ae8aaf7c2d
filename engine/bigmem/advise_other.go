//go:build !linux

package bigmem

import "unsafe"

// advise does nothing where there is no madvise(MADV_HUGEPAGE).
func advise(unsafe.Pointer, uintptr) {}
