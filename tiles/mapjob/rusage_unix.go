//go:build linux || darwin || freebsd

package mapjob

import (
	"runtime"
	"syscall"
)

// peakRSS is the process's peak resident set size in bytes (getrusage(2)
// ru_maxrss: kilobytes on Linux and FreeBSD, bytes on macOS).
func peakRSS() int64 {
	var ru syscall.Rusage
	if syscall.Getrusage(syscall.RUSAGE_SELF, &ru) != nil {
		return 0
	}
	if runtime.GOOS == "darwin" {
		return int64(ru.Maxrss)
	}
	return int64(ru.Maxrss) * 1024
}
