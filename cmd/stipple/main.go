// Command stipple turns population counts per area into dot-density maps:
// an XYZ tile pyramid with a web viewer, a legend and metadata.
//
// Usage:
//
//	stipple render MAP.toml [flags]   render a map file
//	stipple demo [DIR]                render the built-in invented city
//	stipple serve DIR [--port N]      serve a rendered folder on 127.0.0.1
//	stipple version
//
// Exit codes: 0 done; 1 the map could not be made (bad map file, bad input,
// output not writable; the message names the file, feature and field);
// 2 the command line is wrong; 130 interrupted.
//
// For developers: with STIPPLE_CPUPROFILE=FILE set, any command writes a
// CPU profile (go tool pprof) to FILE.
package main

import (
	"context"
	"fmt"
	"os"
	"os/signal"
	"runtime/pprof"
)

func main() {
	if p := os.Getenv("STIPPLE_CPUPROFILE"); p != "" {
		f, err := os.Create(p)
		if err == nil {
			err = pprof.StartCPUProfile(f)
		}
		if err != nil {
			fmt.Fprintln(os.Stderr, "stipple: STIPPLE_CPUPROFILE:", err)
			os.Exit(1)
		}
		defer f.Close()
		defer pprof.StopCPUProfile()
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	code := run(ctx, os.Args[1:], os.Stdout, os.Stderr)
	stop()
	if os.Getenv("STIPPLE_CPUPROFILE") != "" {
		pprof.StopCPUProfile()
	}
	os.Exit(code)
}
