package bigmem

import "testing"

// TestMake checks that Make is make: lengths, capacities and zero values,
// for sizes below and above the advised size, and that the memory is
// usable end to end after the hint.
func TestMake(t *testing.T) {
	for _, tc := range []struct{ n, c int }{{0, 0}, {10, 5}, {10, 20}, {minBytes/8 + 3, 0}, {1 << 22, 1<<22 + 1}} {
		s := Make[uint64](tc.n, tc.c)
		if len(s) != tc.n || cap(s) != max(tc.n, tc.c) {
			t.Fatalf("Make(%d, %d): len %d cap %d", tc.n, tc.c, len(s), cap(s))
		}
		for i := range s {
			if s[i] != 0 {
				t.Fatalf("Make(%d, %d)[%d] = %d, want 0", tc.n, tc.c, i, s[i])
			}
			s[i] = uint64(i)
		}
		for i := range s {
			if s[i] != uint64(i) {
				t.Fatalf("Make(%d, %d)[%d] = %d after writing %d", tc.n, tc.c, i, s[i], i)
			}
		}
	}
}
