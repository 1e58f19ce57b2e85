//go:build race

package rowexpr

// raceEnabled: the race detector makes sync.Pool drop what it holds, so
// regexp allocates a matcher per match and allocation counts mean nothing.
const raceEnabled = true
