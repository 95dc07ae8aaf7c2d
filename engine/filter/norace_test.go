//go:build !race

package filter

// raceBuild is true under the race detector; see race_test.go.
const raceBuild = false
