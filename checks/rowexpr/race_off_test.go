//go:build !race

package rowexpr

const raceEnabled = false
