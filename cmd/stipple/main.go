// Command stipple turns population counts per area into dot-density maps:
// an XYZ tile pyramid with a web viewer, a legend and metadata.
//
// Usage:
//
//	stipple help                      list the commands
//	stipple help COMMAND              a command's synopsis, flags and examples (= stipple COMMAND -h)
//	stipple render MAP.toml [flags]   render a map file
//	stipple demo [DIR]                render the built-in invented city
//	stipple serve DIR [--port N]      serve a rendered folder on 127.0.0.1
//	stipple version                   (or stipple --version)
//
// Each command registers its help (a cmdDoc) next to its flags; parse
// finds it by the flag set's name and applies the ranges every command
// shares (flagRules).
//
// Exit codes: 0 done; 1 the map could not be made (bad map file, bad input,
// output not writable; the message names the file, feature and field);
// 2 the command line is wrong; 130 interrupted (SIGINT, Ctrl-C); 143
// stopped (SIGTERM, as sent by kill, systemd or a container runtime).
// Either signal cancels the work, which stops cleanly so that rerunning
// the same command finishes it.
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
	"sync/atomic"
	"syscall"
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
	ctx, stop, received := notifyContext()
	code := run(ctx, os.Args[1:], os.Stdout, os.Stderr)
	stop()
	code = interruptedCode(code, received())
	if os.Getenv("STIPPLE_CPUPROFILE") != "" {
		pprof.StopCPUProfile()
	}
	os.Exit(code)
}

// notifyContext returns a context cancelled by the first SIGINT or
// SIGTERM, a function that stops listening, and one that reports the
// signal received (nil when none). Later signals are caught and ignored
// until stop, so a second Ctrl-C does not cut the clean stop short.
func notifyContext() (ctx context.Context, stop func(), received func() os.Signal) {
	ctx, cancel := context.WithCancel(context.Background())
	ch := make(chan os.Signal, 2)
	signal.Notify(ch, os.Interrupt, syscall.SIGTERM)
	var got atomic.Value
	done := make(chan struct{})
	go func() {
		select {
		case s := <-ch:
			got.Store(s)
			cancel()
		case <-done:
		}
	}()
	stop = func() {
		signal.Stop(ch)
		close(done)
		cancel()
	}
	received = func() os.Signal {
		s, _ := got.Load().(os.Signal)
		return s
	}
	return ctx, stop, received
}

// interruptedCode turns run's exit code for a cancelled command (130)
// into 128 + the signal's number when that signal was SIGTERM: 143, as a
// shell reports a command that SIGTERM ended (Bash Reference Manual,
// section 3.7.5 "Exit Status": 128+N for fatal signal N; SIGTERM is 15
// in POSIX kill's list of signal numbers).
func interruptedCode(code int, sig os.Signal) int {
	if code == 130 && sig == syscall.SIGTERM {
		return 143
	}
	return code
}
