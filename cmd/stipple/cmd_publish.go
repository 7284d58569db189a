package main

import (
	"context"
	"flag"
	"fmt"
	"io"
	"strings"

	"github.com/stipple-maps/stipple/tiles"
)

var publishDoc = register(cmdDoc{Name: "publish", Order: 55, Usage: "publish OUT DEST [--url ADDRESS] [--resume]",
	Short: "copy what a web host needs of a rendered folder OUT into DEST (a folder or bucket URL)",
	About: "Copies the tiles, viewer, legend, metadata and the other files a web page loads from the rendered " +
		"folder OUT into DEST, a folder or a bucket URL, and leaves out stipple's own state (.stipple/) and " +
		"dot-files. With --url, tilejson.json names the tiles by absolute address.",
	Examples: []string{
		"stipple publish map-out site/",
		"stipple publish map-out s3://bucket/maps/langs/ --url https://maps.example.org/langs/",
	}})

// cmdPublish is "stipple publish OUT DEST" (tiles.Publish): copy what a
// web host needs of a rendered folder into DEST, a folder or a bucket URL.
func cmdPublish(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("publish", flag.ContinueOnError)
	fs.SetOutput(stderr)
	base := fs.String("url", "", "the `address` DEST is served from (https://host/path/): tilejson.json then names the tiles by absolute URL (default: none, relative URLs)")
	resume := fs.Bool("resume", false, "keep files DEST already holds with the same size (to finish an interrupted publish of the same render)")
	pos, err := parse(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 2 {
		return usageError{"publish takes a rendered folder and a destination (folder or bucket URL)"}
	}
	if *base != "" && !(strings.HasPrefix(*base, "https://") || strings.HasPrefix(*base, "http://")) {
		return usageError{fmt.Sprintf("--url %q: want an http:// or https:// address", *base)}
	}
	if *base != "" && !strings.HasSuffix(*base, "/") {
		*base += "/"
	}
	st, err := tiles.Publish(ctx, pos[0], pos[1], tiles.PublishOptions{BaseURL: *base, Resume: *resume})
	if err != nil {
		return err
	}
	fmt.Fprintf(stdout, "published %s to %s: %d files, %.1f MB", pos[0], pos[1], st.Files, float64(st.Bytes)/1e6)
	if st.Kept > 0 {
		fmt.Fprintf(stdout, " (%d already there)", st.Kept)
	}
	fmt.Fprintf(stdout, "\nleft out: %d files, %.1f MB (stipple's state and dot-files; no web page loads them)\n", st.LeftOut, float64(st.LeftOutBytes)/1e6)
	return nil
}
