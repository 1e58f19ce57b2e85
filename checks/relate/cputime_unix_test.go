//go:build unix

package relate

import (
	"syscall"
	"time"
)

// cpuTime is the user and system CPU time of the process so far: on a
// shared machine it measures a benchmark's work where wall time also
// measures the neighbours.
func cpuTime() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}
