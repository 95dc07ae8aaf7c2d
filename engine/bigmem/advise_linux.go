//go:build linux

package bigmem

import (
	"unsafe"

	"golang.org/x/sys/unix"
)

// hugePage is the size of a transparent huge page on linux/amd64 and most
// arm64 kernels.
const hugePage = 2 << 20

// advise asks the kernel to back the huge-page-aligned interior of the
// size bytes at p with huge pages. It is a hint: an error (a kernel without
// transparent huge pages) changes nothing and is ignored.
func advise(p unsafe.Pointer, size uintptr) {
	start := (uintptr(p) + hugePage - 1) &^ (hugePage - 1)
	end := (uintptr(p) + size) &^ (hugePage - 1)
	if end <= start {
		return
	}
	// The region lies inside a live Go allocation, so it stays mapped for
	// as long as the slice does.
	region := unsafe.Slice((*byte)(unsafe.Add(p, start-uintptr(p))), end-start)
	_ = unix.Madvise(region, unix.MADV_HUGEPAGE)
}
