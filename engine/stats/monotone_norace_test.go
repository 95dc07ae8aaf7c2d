//go:build !race

package stats

// monotoneRaceBuild is true when the tests run under the race detector; see
// skipUnderRace.
const monotoneRaceBuild = false
