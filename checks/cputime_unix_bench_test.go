//go:build unix

package checks

import (
	"syscall"
	"time"
)

// processCPU is the user and system CPU time of the process so far. On a
// machine shared with other work it measures what a benchmark itself did,
// where wall time also counts the time other processes held the cores.
func processCPU() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}
