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

// usageError marks a wrong command line (exit code 2); run prints the
// command's short usage after it.
type usageError struct{ msg string }

func (e usageError) Error() string { return e.msg }

var (
	renderDoc = register(cmdDoc{Name: "render", Order: 10, Usage: "render MAP.toml [flags]",
		Short: "render the map a map file describes: tiles, viewer, legend, metadata",
		About: "Reads the areas and counts the map file names, places one dot per people_per_dot people " +
			"at random inside each area (seeded, so the same file gives the same bytes), and writes the XYZ tile " +
			"pyramid, the web viewer, the legend, embed.html, alt.txt and map.json into the map's out folder. " +
			"Flags replace the map file's keys for this run: a flag given on the command line always wins, and a " +
			"value outside the key's range is refused. A render stopped by Ctrl-C resumes when rerun.",
		Examples: []string{
			"stipple render map.toml                               # as the map file says",
			"stipple render map.toml --max-zoom 10 --out preview   # a quick, shallower look",
		}})
	demoDoc = register(cmdDoc{Name: "demo", Order: 20, Usage: "demo [DIR] [flags]",
		Short: "render the built-in invented city into DIR (default stipple-demo), and two counts of it in DIR/compare",
		About: "Writes the invented city Quillmere (its areas, groups and counts are all made up) and its map file " +
			"into DIR/source, then renders it into DIR, as render would. The flags replace the demo's own settings.",
		Examples: []string{
			"stipple demo /tmp/demo          # then open /tmp/demo/index.html",
			"stipple demo --max-zoom 12      # into ./stipple-demo, fewer zooms",
		}})
	versionDoc = register(cmdDoc{Name: "version", Order: 200, Usage: "version",
		Short:    "print the version (also: stipple --version)",
		About:    "Prints stipple's version, the one map.json records.",
		Examples: []string{"stipple version"}})
	helpDoc = register(cmdDoc{Name: "help", Order: 210, Usage: "help [COMMAND]",
		Short: "list the commands, or show one command's flags and examples",
		About: "Without a command, lists the commands. With one, prints the same help as \"stipple COMMAND --help\": " +
			"the synopsis, what it does, its flags with their defaults, and examples.",
		Examples: []string{"stipple help", "stipple help render"}})
)

func run(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	err := dispatch(ctx, args, stdout, stderr)
	if err == nil {
		return 0
	}
	var ue usageError
	var hr helpRequest
	switch {
	case errors.As(err, &hr):
		fmt.Fprint(stdout, commandHelp(hr.fs))
		return 0
	case errors.As(err, &ue):
		fmt.Fprintln(stderr, "stipple: "+oneLine(ue.msg))
		if d, ok := docs[first(args)]; ok && first(args) != "help" {
			fmt.Fprint(stderr, shortUsage(d))
		} else {
			fmt.Fprintln(stderr, `Run "stipple help" for the commands.`)
		}
		return 2
	case errors.Is(err, context.Canceled):
		fmt.Fprintln(stderr, "stipple: interrupted; rerun the same command to finish")
		return 130
	default:
		fmt.Fprintln(stderr, "stipple: "+oneLine(err.Error()))
		return 1
	}
}

// first is args[0], or "" for no arguments.
func first(args []string) string {
	if len(args) == 0 {
		return ""
	}
	return args[0]
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
	case "version", "--version", "-version":
		return cmdVersion(ctx, args[1:], stdout, stderr)
	case "help", "-h", "--help", "-help":
		return cmdHelp(ctx, args[1:], stdout, stderr)
	default:
		msg := fmt.Sprintf("unknown command %q", args[0])
		if strings.HasPrefix(args[0], "-") {
			msg = fmt.Sprintf("unknown flag %s before a command", args[0])
		}
		if near := nearestCommand(args[0]); near != "" {
			msg += fmt.Sprintf("; did you mean %q?", near)
		}
		return usageError{msg}
	}
}

// nearestCommand is the registered command closest to name, when close
// enough to be a typo.
func nearestCommand(name string) string {
	best, bestD := "", 1<<30
	for _, d := range sortedDocs() {
		if n := editDistance(name, d.Name); n < bestD {
			best, bestD = d.Name, n
		}
	}
	if bestD <= min(3, max(1, len(name)/3)) {
		return best
	}
	return ""
}

func cmdVersion(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("version", flag.ContinueOnError)
	fs.SetOutput(stderr)
	pos, err := parse(fs, args)
	if err != nil {
		return err
	}
	if len(pos) > 0 {
		return usageErr("version takes no arguments")
	}
	fmt.Fprintln(stdout, "stipple", mapjob.Version)
	return nil
}

func cmdHelp(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("help", flag.ContinueOnError)
	fs.SetOutput(stderr)
	pos, err := parse(fs, args)
	if err != nil {
		return err
	}
	switch len(pos) {
	case 0:
		fmt.Fprint(stdout, generalHelp())
		return nil
	case 1:
		if pos[0] == "help" {
			return helpRequest{fs}
		}
		if _, ok := docs[pos[0]]; !ok {
			msg := fmt.Sprintf("help: unknown command %q", pos[0])
			if near := nearestCommand(pos[0]); near != "" {
				msg += fmt.Sprintf("; did you mean %q?", near)
			}
			return usageError{msg}
		}
		return dispatch(ctx, []string{pos[0], "-h"}, stdout, stderr)
	default:
		return usageErr("help takes at most one command")
	}
}

// overrides are the flags that replace map-file values. A flag the command
// line sets always replaces the key, whatever its value; a value outside
// the key's range is refused (flagRules and the map file's own checks),
// never silently ignored.
type overrides struct {
	fs                         *flag.FlagSet
	out                        string
	seed                       int64
	perDot                     float64
	minZoom, maxZoom, tileSize int
	workers                    int
	memory                     string
	hidpi                      bool
	force                      bool
}

// register defines the override flags on fs, for a command that reads a
// map file.
func (o *overrides) register(fs *flag.FlagSet) { o.registerFrom(fs, nil) }

// registerFrom defines the override flags on fs. demo, when set, is the
// built-in demo's map: its values are the defaults shown, and there is no
// --out (the demo's folder is its argument).
func (o *overrides) registerFrom(fs *flag.FlagSet, demo *mapfile.Map) {
	o.fs = fs
	from := func(key string, _ any) string { return "(default: the map file's " + key + ")" }
	if demo != nil {
		from = func(_ string, v any) string { return fmt.Sprintf("(default %v, the demo's)", v) }
	} else {
		fs.StringVar(&o.out, "out", "", "output `folder` or bucket URL "+from("out", nil))
	}
	var d mapfile.Map
	if demo != nil {
		d = *demo
	}
	fs.Int64Var(&o.seed, "seed", 0, "random seed, a whole number from 0 up "+from("seed", d.Seed))
	fs.Float64Var(&o.perDot, "per-dot", 0, "people per dot, at least 0.01 "+from("people_per_dot", d.PeoplePerDot))
	fs.IntVar(&o.minZoom, "min-zoom", 0, "lowest zoom, 0 to 22 "+from("tiles.min_zoom", d.Tiles.MinZoom))
	fs.IntVar(&o.maxZoom, "max-zoom", 0, "deepest zoom, 0 to 22 "+from("tiles.max_zoom", d.Tiles.MaxZoom))
	fs.IntVar(&o.tileSize, "tile-size", 0, "tile size in pixels, 256 or 512 "+from("tiles.size", d.Tiles.Size))
	fs.IntVar(&o.workers, "workers", 0, "parallel workers, at most 4 per core (default: one per core)")
	fs.StringVar(&o.memory, "memory", "", "memory budget, a `size` such as 512MiB or 2GiB: dots beyond it are spilled to disk, sorted, and merged (default 2GiB)")
	fs.BoolVar(&o.force, "force", false, "write into a folder that holds files stipple did not write")
	hd := "(default: the map file's tiles.hidpi)"
	if demo != nil {
		hd = ""
	}
	fs.BoolVar(&o.hidpi, "hidpi", false, strings.TrimSpace("also write {z}/{x}/{y}@2x.png tiles for high-density screens "+hd))
}

// runOptions are the build options the flags and the map file give.
func (o *overrides) runOptions(m *mapfile.Map, stdout io.Writer) (mapjob.Options, error) {
	opt := mapjob.Options{Workers: o.workers, Log: stdout, HiDPI: o.hidpi || m.Tiles.HiDPI, Force: o.force}
	if o.memory != "" {
		n, err := mapfile.ParseSize(o.memory)
		if err != nil || n <= 0 {
			return opt, usageErr("--memory %q: want a size such as 2GiB or 512MiB", o.memory)
		}
		opt.Memory = n
	}
	return opt, nil
}

func (o *overrides) apply(m *mapfile.Map) error {
	set := func(name string) bool { return o.fs != nil && isSet(o.fs, name) }
	if set("out") {
		if o.out == "" {
			return usageErr("--out: want a folder or bucket URL")
		}
		m.Out = o.out
	} else if o.out != "" {
		m.Out = o.out // the demo's folder
	} else if !sink.IsBucketURL(m.Out) {
		m.Out = m.Resolve(m.Out)
	}
	if set("seed") {
		m.Seed = uint64(o.seed) // flagRules refused negative seeds
	}
	if set("per-dot") {
		m.PeoplePerDot = o.perDot
		if err := m.CheckPerDot(); err != nil {
			return usageErr("--per-dot %s", err)
		}
	}
	if set("min-zoom") {
		m.Tiles.MinZoom = o.minZoom
	}
	if set("max-zoom") {
		m.Tiles.MaxZoom = o.maxZoom
	}
	if set("tile-size") {
		m.Tiles.Size = o.tileSize
	}
	if err := m.CheckZooms(); err != nil {
		// The file's own values passed mapfile.Read: a flag broke them.
		return usageErr("%s (after --min-zoom, --max-zoom, --tile-size)", err)
	}
	if o.hidpi && m.Dots.Diameter > mapfile.MaxHiDPIDiameter {
		return &mapfile.Error{Path: m.Path, Key: "dots.diameter", Msg: fmt.Sprintf("is %v; --hidpi draws dots at twice the pixels, at most 64, so want at most %v", m.Dots.Diameter, mapfile.MaxHiDPIDiameter)}
	}
	return nil
}

func cmdRender(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("render", flag.ContinueOnError)
	fs.SetOutput(stderr)
	var o overrides
	o.register(fs)
	var sh shardFlag
	fs.Var(&sh, "shard", shardUsage)
	rates := fs.String("rates", "", ratesUsage)
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
	r, err := readRates(*rates)
	if err != nil {
		return err
	}
	if sh.set {
		return renderShard(ctx, m, sh.spec, opt, r, stdout)
	}
	if r != nil {
		return usageError{"--rates cuts a sharded render into parts: give it with --shard"}
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
	if ms := md.Measures; ms != nil && ms.H != nil && ms.M != nil {
		fmt.Fprintf(w, "  mixing: Theil's H %.3f (0 = every area has the whole mix, 1 = each area one group), M %.3f; per area in %s\n", *ms.H, *ms.M, ms.AreaTable)
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
	demoDefaults, err := mapfile.Parse("demo.toml", []byte(demoText()))
	if err != nil {
		return err
	}
	o.registerFrom(fs, demoDefaults)
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

// demoText is the demo's whole map file, categories included.
func demoText() string {
	var b strings.Builder
	b.WriteString(demoMapFile)
	for _, g := range demo.Groups {
		fmt.Fprintf(&b, "\n[[category]]\nkey = %q\nlabel = %q\ncolor = %q\nfields = [%q]\n", g.Field, g.Label, g.Color, g.Field)
	}
	b.WriteString(demoReferences)
	return b.String()
}

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
	path := filepath.Join(src, "quillmere.toml")
	if err := os.WriteFile(path, []byte(demoText()), 0o644); err != nil {
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
