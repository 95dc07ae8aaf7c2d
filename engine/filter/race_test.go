//go:build race

package filter

// raceBuild is true under the race detector, which makes HCL evaluation
// about ten times slower: the oracle tests then check fewer filters.
const raceBuild = true
