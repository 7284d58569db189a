//go:build !unix

package render

// cpuNanos is -1 where the process's CPU time is not read.
func cpuNanos() int64 { return -1 }
