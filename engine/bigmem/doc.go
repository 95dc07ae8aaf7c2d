// Package bigmem allocates the large slices of a run (columns of millions
// of values, radix-sort scratch, ranks) so that the operating system maps
// them in huge pages where it can.
//
// Memory a process touches for the first time costs a page fault per page.
// On the 2-core virtual machines this project is measured on, that cost
// was ~5 ms of CPU per MB with 4 KiB pages, more than sorting the values
// that fill it: ranking one column of 10⁷ values faults in 240 MB of
// scratch. Linux can back an anonymous region with 2 MiB pages when asked
// (madvise(MADV_HUGEPAGE), for systems whose transparent huge pages are in
// "madvise" mode, the common default); the Go runtime no longer asks on its
// own. Elsewhere, and for slices under a few huge pages, these functions
// are plain make.
package bigmem
