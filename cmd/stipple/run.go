package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"time"

	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/geo/demo"
	"github.com/stipple-maps/stipple/geo/geojson"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/mapjob"
	"github.com/stipple-maps/stipple/tiles/sink"
)

// usageError marks a wrong command line (exit code 2).
type usageError struct{ msg string }

func (e usageError) Error() string { return e.msg }

const usage = `stipple turns people counted per area into dot-density maps.

  stipple render MAP.toml [flags]   render the map a map file describes
  stipple demo [DIR]                render the built-in invented city into DIR (default stipple-demo), and two counts of it in DIR/compare
  stipple inspect FILE [--map MAP.toml]   describe a polygon file; with a map, what a render would make
  stipple init FILE [-o MAP.toml]   write a starter map file for a polygon file
  stipple serve DIR [--port 8080]   serve a rendered folder on 127.0.0.1 for a quick look
  stipple print MAP.toml [flags]    print the map on a page (PNG and PDF, equal-area projection)
  stipple batch FILE [flags]        render many extents (boxes, id lists, field values) from one sampling
  stipple plan MAP.toml --shards N  size a render cut into N parts: work per part, tiles, bytes, core-hours
  stipple version                   print the version

Run "stipple render -h" for the flags that override a map file.
`

func run(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	err := dispatch(ctx, args, stdout, stderr)
	if err == nil {
		return 0
	}
	var ue usageError
	switch {
	case errors.Is(err, flag.ErrHelp):
		return 0
	case errors.As(err, &ue):
		fmt.Fprintln(stderr, "stipple: "+ue.msg)
		fmt.Fprint(stderr, "\n"+usage)
		return 2
	case errors.Is(err, context.Canceled):
		fmt.Fprintln(stderr, "stipple: interrupted; rerun the same command to finish")
		return 130
	default:
		fmt.Fprintln(stderr, "stipple: "+oneLine(err.Error()))
		return 1
	}
}

func oneLine(s string) string { return strings.ReplaceAll(s, "\n", " ") }

func dispatch(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	if len(args) == 0 {
		return usageError{"no command given"}
	}
	switch args[0] {
	case "render":
		return cmdRender(ctx, args[1:], stdout, stderr)
	case "bench":
		return cmdBench(ctx, args[1:], stdout, stderr)
	case "demo":
		return cmdDemo(ctx, args[1:], stdout, stderr)
	case "inspect":
		return cmdInspect(ctx, args[1:], stdout, stderr)
	case "init":
		return cmdInit(ctx, args[1:], stdout, stderr)
	case "serve":
		return cmdServe(ctx, args[1:], stdout, stderr)
	case "print":
		return cmdPrint(ctx, args[1:], stdout, stderr)
	case "plan":
		return cmdPlan(ctx, args[1:], stdout, stderr)
	case "batch":
		return cmdBatch(ctx, args[1:], stdout, stderr)
	case "measure":
		return cmdMeasure(ctx, args[1:], stdout, stderr)
	case "publish":
		return cmdPublish(ctx, args[1:], stdout, stderr)
	case "still":
		return cmdStill(ctx, args[1:], stdout, stderr)
	case "version":
		fmt.Fprintln(stdout, "stipple", mapjob.Version)
		return nil
	case "help", "-h", "--help":
		fmt.Fprint(stdout, usage)
		return nil
	default:
		return usageError{fmt.Sprintf("unknown command %q", args[0])}
	}
}

// overrides are the flags that replace map-file values.
type overrides struct {
	out                        string
	seed                       int64
	perDot                     float64
	minZoom, maxZoom, tileSize int
	workers                    int
	memory                     string
	hidpi                      bool
	force                      bool
}

func (o *overrides) register(fs *flag.FlagSet) {
	fs.StringVar(&o.out, "out", "", "output folder (overrides out)")
	fs.Int64Var(&o.seed, "seed", -1, "random seed (overrides seed)")
	fs.Float64Var(&o.perDot, "per-dot", 0, "people per dot (overrides people_per_dot)")
	fs.IntVar(&o.minZoom, "min-zoom", -1, "lowest zoom (overrides tiles.min_zoom)")
	fs.IntVar(&o.maxZoom, "max-zoom", -1, "deepest zoom (overrides tiles.max_zoom)")
	fs.IntVar(&o.tileSize, "tile-size", 0, "tile size in pixels, 256 or 512 (overrides tiles.size)")
	fs.IntVar(&o.workers, "workers", 0, "parallel workers (default: all cores)")
	fs.StringVar(&o.memory, "memory", "", "memory budget, e.g. 2GiB (default 2GiB): dots beyond it are spilled to disk, sorted, and merged")
	fs.BoolVar(&o.force, "force", false, "write into a folder that holds files stipple did not write")
	fs.BoolVar(&o.hidpi, "hidpi", false, "also write {z}/{x}/{y}@2x.png tiles for high-density screens (overrides tiles.hidpi)")
}

// runOptions are the build options the flags and the map file give.
func (o *overrides) runOptions(m *mapfile.Map, stdout io.Writer) (mapjob.Options, error) {
	opt := mapjob.Options{Workers: o.workers, Log: stdout, HiDPI: o.hidpi || m.Tiles.HiDPI, Force: o.force}
	if o.memory != "" {
		n, err := mapfile.ParseSize(o.memory)
		if err != nil || n <= 0 {
			return opt, usageError{fmt.Sprintf("--memory %q: want a size such as 2GiB or 512MiB", o.memory)}
		}
		opt.Memory = n
	}
	return opt, nil
}

func (o *overrides) apply(m *mapfile.Map) error {
	if o.out != "" {
		m.Out = o.out
	} else if !sink.IsBucketURL(m.Out) {
		m.Out = m.Resolve(m.Out)
	}
	if o.seed >= 0 {
		m.Seed = uint64(o.seed)
	}
	if o.perDot < 0 {
		return usageError{"--per-dot must be positive"}
	}
	if o.perDot > 0 {
		m.PeoplePerDot = o.perDot
		if err := m.CheckPerDot(); err != nil {
			return usageError{"--per-dot " + err.Error()}
		}
	}
	if o.minZoom >= 0 {
		m.Tiles.MinZoom = o.minZoom
	}
	if o.maxZoom >= 0 {
		m.Tiles.MaxZoom = o.maxZoom
	}
	if o.tileSize != 0 {
		m.Tiles.Size = o.tileSize
	}
	if err := m.CheckZooms(); err != nil {
		return usageError{err.Error()}
	}
	if o.hidpi && m.Dots.Diameter > mapfile.MaxHiDPIDiameter {
		return &mapfile.Error{Path: m.Path, Key: "dots.diameter", Msg: fmt.Sprintf("is %v; --hidpi draws dots at twice the pixels, at most 64, so want at most %v", m.Dots.Diameter, mapfile.MaxHiDPIDiameter)}
	}
	return nil
}

// parse parses flags that may come before or after the positional arguments.
func parse(fs *flag.FlagSet, args []string) ([]string, error) {
	var pos []string
	for {
		if err := fs.Parse(args); err != nil {
			if errors.Is(err, flag.ErrHelp) {
				return nil, err
			}
			return nil, usageError{err.Error()}
		}
		args = fs.Args()
		if len(args) == 0 {
			return pos, nil
		}
		pos = append(pos, args[0])
		args = args[1:]
	}
}

func cmdRender(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("render", flag.ContinueOnError)
	fs.SetOutput(stderr)
	var o overrides
	o.register(fs)
	var sh shardFlag
	fs.Var(&sh, "shard", shardUsage)
	work := fs.String("work", "", "local folder for the state of a bucket output or of a --shard part (default: the output's .stipple folder, or the system's temporary folder for a bucket)")
	pos, err := parse(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 1 {
		return usageError{"render takes one map file"}
	}
	m, err := mapfile.Read(pos[0])
	if err != nil {
		return err
	}
	if err := o.apply(m); err != nil {
		return err
	}
	opt, err := o.runOptions(m, stdout)
	if err != nil {
		return err
	}
	opt.Work = *work
	if sh.set {
		return renderShard(ctx, m, sh.spec, opt, stdout)
	}
	// A folder, file:// URL or bucket: mapjob.Run writes to each alike.
	return renderMap(ctx, m, opt, stdout)
}

func renderMap(ctx context.Context, m *mapfile.Map, opt mapjob.Options, stdout io.Writer) error {
	if len(m.Layers) > 0 {
		return renderLayers(ctx, m, opt, stdout)
	}
	in, err := mapjob.Load(m, nil)
	if err != nil {
		return err
	}
	printInputReport(stdout, in)
	opt.Input = in
	s, err := mapjob.Run(ctx, m, opt)
	if err != nil {
		return err
	}
	printSummary(stdout, s)
	return nil
}

// printInputReport says what reading and joining found, before the render.
func printInputReport(w io.Writer, in *mapjob.Input) {
	if in.Read != nil {
		r := in.Read
		crs := r.CRS.Name
		if crs == "" {
			crs = "none declared (lon/lat assumed)"
		}
		fmt.Fprintf(w, "input: %s, %s, %d areas, coordinate system: %s\n", r.Layer.Path, r.Format, len(r.Layer.Features), crs)
		if n := len(r.Notes); n > 0 {
			fmt.Fprintf(w, "input: %d geometry notes:\n", n)
			printFirst(w, "  ", r.Notes, " (stipple inspect lists them all)")
		}
	}
	if in.Join != nil {
		fmt.Fprintln(w, strings.TrimRight(in.Join.String(), "\n"))
	}
}

// printFirst prints the first ten items, one a line after indent, and how
// many more there are, followed by tail.
func printFirst(w io.Writer, indent string, items []string, tail string) {
	for i, it := range items {
		if i == 10 {
			fmt.Fprintf(w, "%s… and %d more%s\n", indent, len(items)-10, tail)
			return
		}
		fmt.Fprintf(w, "%s%s\n", indent, it)
	}
}

func printSummary(w io.Writer, s *mapjob.Summary) {
	md := s.Metadata
	fmt.Fprintf(w, "\n%s\n", md.Title)
	for _, c := range md.Categories {
		fmt.Fprintf(w, "  %-24s %12s people  %10d dots (expected %.1f)\n", c.Label, render.FormatCount(c.People), c.DotsDrawn, c.DotsExpected)
	}
	fmt.Fprintf(w, "  %s; seed %d\n", md.Note, md.Seed)
	if s.NotDrawn > 0 {
		fmt.Fprintf(w, "  not drawn: %s people in %d areas:\n", render.FormatCount(s.NotDrawn), len(s.Problems))
		printFirst(w, "    ", s.Problems, " (see map.json)")
	} else {
		fmt.Fprintln(w, "  not drawn: 0 people in areas")
	}
	if n := len(s.Notes); n > 0 {
		fmt.Fprintf(w, "  drawn with a note: %d areas:\n", n)
		printFirst(w, "    ", s.Notes, "")
	}
	if s.RowsWithoutArea > 0 {
		fmt.Fprintf(w, "  not drawn: %s people in table rows that match no area (listed above)\n", render.FormatCount(s.RowsWithoutArea))
	}
	if s.BeyondPeople > 0 {
		fmt.Fprintf(w, "  not on the tiles: %s people (%d dots) beyond Web Mercator's latitude limit (85.05° north or south); print pages draw them\n",
			render.FormatCount(s.BeyondPeople), sum(s.Beyond))
	}
	fmt.Fprintf(w, "  %d tiles, %.1f MB, zooms %d–%d, in %s\n", s.Tiles.Tiles, float64(s.Tiles.Bytes)/1e6, md.MinZoom, md.MaxZoom, s.Elapsed.Round(time.Millisecond))
	fmt.Fprintf(w, "  open %s in a browser, or: stipple serve %s\n", filepath.Join(s.OutputDir, "index.html"), s.OutputDir)
	fmt.Fprintf(w, "\nTo embed in a story, publish the folder and paste (with src set to embed.html's published address):\n%s\n", tiles.EmbedSnippet(md, "embed.html"))
}

func cmdDemo(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("demo", flag.ContinueOnError)
	fs.SetOutput(stderr)
	var o overrides
	o.register(fs)
	pos, err := parse(fs, args)
	if err != nil {
		return err
	}
	dir := "stipple-demo"
	if len(pos) > 1 {
		return usageError{"demo takes at most one folder"}
	}
	if len(pos) == 1 {
		dir = pos[0]
	}
	// The demo's folder is the map's output: claim it before writing the
	// source into it, so a folder of someone else's files is refused.
	release, err := mapjob.Claim(dir, o.force)
	if err != nil {
		return err
	}
	release()
	m, err := writeDemoSource(dir)
	if err != nil {
		return err
	}
	if o.out == "" {
		o.out = dir
	}
	if err := o.apply(m); err != nil {
		return err
	}
	fmt.Fprintf(stdout, "demo: Quillmere is an invented city; its areas, groups and counts are made up (source in %s)\n", filepath.Join(dir, "source"))
	opt, err := o.runOptions(m, stdout)
	if err != nil {
		return err
	}
	if err := renderMap(ctx, m, opt, stdout); err != nil {
		return err
	}
	// The two invented counts, compared on the newer areas, in DIR/compare.
	cm, err := writeDemoCompare(dir)
	if err != nil {
		return err
	}
	oc := o
	oc.out = filepath.Join(dir, "compare")
	if err := oc.apply(cm); err != nil {
		return err
	}
	fmt.Fprintf(stdout, "\ndemo: an invented older count on older boundaries, carried onto the newer areas, compared with the newer count in %s\n", oc.out)
	return renderMap(ctx, cm, opt, stdout)
}

// demoMapFile is the built-in demo's map file.
const demoMapFile = `# Quillmere: an invented harbour city. Every area, group and number here
# is made up by stipple's demo generator; none of it describes real people.
title = "Home languages of Quillmere (invented demo)"
credit = "Invented data made by stipple's demo generator; not a real place."
people_per_dot = 10
seed = 1
out = ".."

[input]
file = "quillmere.geojson"
id = "code"

[tiles]
min_zoom = 9
max_zoom = 15
size = 256

[dots]
diameter = 3.2
min_diameter = 0.7
opacity = 0.9

# Colours: Okabe & Ito (2008), "Color Universal Design", colour-blind safe.
`

// demoReferences are the demo's invented reference layers.
const demoReferences = `
# Reference layers (invented): the river under the dots, roads and names over them.
[[reference]]
file = "water.geojson"
kind = "areas"

[[reference]]
file = "roads.geojson"
kind = "lines"
above = true
color = "#8d939c"
width = 1.2

[[reference]]
file = "places.geojson"
kind = "labels"
name = "name"
rank = "rank"
`

// writeDemoSource writes the demo's GeoJSON and map file under dir/source
// and returns the parsed map.
func writeDemoSource(dir string) (*mapfile.Map, error) {
	src := filepath.Join(dir, "source")
	if err := os.MkdirAll(src, 0o755); err != nil {
		return nil, fmt.Errorf("demo: %w", err)
	}
	if err := geojson.Write(filepath.Join(src, "quillmere.geojson"), demo.City(1)); err != nil {
		return nil, err
	}
	for name, l := range map[string]*geo.Layer{"places.geojson": demo.Places(), "roads.geojson": demo.Roads(), "water.geojson": demo.Water()} {
		if err := geojson.Write(filepath.Join(src, name), l); err != nil {
			return nil, err
		}
	}
	var b strings.Builder
	b.WriteString(demoMapFile)
	for _, g := range demo.Groups {
		fmt.Fprintf(&b, "\n[[category]]\nkey = %q\nlabel = %q\ncolor = %q\nfields = [%q]\n", g.Field, g.Label, g.Color, g.Field)
	}
	b.WriteString(demoReferences)
	path := filepath.Join(src, "quillmere.toml")
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		return nil, fmt.Errorf("demo: %w", err)
	}
	return mapfile.Read(path)
}

func sum(v []int) int {
	n := 0
	for _, x := range v {
		n += x
	}
	return n
}
