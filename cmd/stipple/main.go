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
package main

import (
	"context"
	"os"
	"os/signal"
)

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	code := run(ctx, os.Args[1:], os.Stdout, os.Stderr)
	stop()
	os.Exit(code)
}
