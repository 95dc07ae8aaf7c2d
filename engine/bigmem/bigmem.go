package bigmem

import "unsafe"

// minBytes is the size from which a slice is worth advising: below a few
// huge pages the aligned interior is small or empty.
const minBytes = 8 << 20

// Make returns make([]T, n, c) (c < n means c = n), advised for huge pages
// when it is large.
func Make[T any](n, c int) []T {
	c = max(c, n)
	s := make([]T, n, c)
	var zero T
	if size := uintptr(c) * unsafe.Sizeof(zero); c > 0 && size >= minBytes {
		advise(unsafe.Pointer(unsafe.SliceData(s)), size)
	}
	return s
}
