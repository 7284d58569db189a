//go:build unix

package render

import "syscall"

// cpuNanos is the CPU time (user + system) this process has used, in
// nanoseconds: benchmarks report it beside wall time, which on a busy
// machine also counts the time other processes held the CPU.
func cpuNanos() int64 {
	var ru syscall.Rusage
	if syscall.Getrusage(syscall.RUSAGE_SELF, &ru) != nil {
		return -1
	}
	return ru.Utime.Nano() + ru.Stime.Nano()
}
