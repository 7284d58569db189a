package main

import (
	"bytes"
	"context"
	"encoding/json"
	"go/ast"
	"go/parser"
	"go/token"
	"os"
	"path/filepath"
	"regexp"
	"runtime"
	"strconv"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/geo/reftool"
)

// dispatchCommands reads the command words of run.go's dispatch switch,
// so a command added there without help fails TestEveryCommandHasHelp.
func dispatchCommands(t *testing.T) []string {
	t.Helper()
	f, err := parser.ParseFile(token.NewFileSet(), "run.go", nil, 0)
	if err != nil {
		t.Fatal(err)
	}
	var names []string
	ast.Inspect(f, func(n ast.Node) bool {
		fd, ok := n.(*ast.FuncDecl)
		if !ok || fd.Name.Name != "dispatch" {
			return true
		}
		ast.Inspect(fd, func(n ast.Node) bool {
			cc, ok := n.(*ast.CaseClause)
			if !ok {
				return true
			}
			for _, e := range cc.List {
				if lit, ok := e.(*ast.BasicLit); ok {
					s, _ := strconv.Unquote(lit.Value)
					if !strings.HasPrefix(s, "-") {
						names = append(names, s)
					}
				}
			}
			return true
		})
		return false
	})
	if len(names) < 12 {
		t.Fatalf("found only %d commands in dispatch: %v", len(names), names)
	}
	return names
}

func runCLI(args ...string) (code int, stdout, stderr string) {
	var o, e bytes.Buffer
	code = run(context.Background(), args, &o, &e)
	return code, o.String(), e.String()
}

// singleDash finds a flag written with one dash ("-out", "-h"), as Go's
// flag package prints them; stipple's help writes --name.
var singleDash = regexp.MustCompile(`(^|[\s(\[,"])-[A-Za-z]`)

func TestEveryCommandHasHelp(t *testing.T) {
	_, general, _ := runCLI("help")
	for _, name := range dispatchCommands(t) {
		t.Run(name, func(t *testing.T) {
			if _, ok := docs[name]; !ok {
				t.Fatalf("command %q has no registered help (register a cmdDoc next to its flags)", name)
			}
			code, h, stderr := runCLI(name, "-h")
			if code != 0 || stderr != "" {
				t.Fatalf("%s -h: exit %d, stderr %q", name, code, stderr)
			}
			if !strings.HasPrefix(h, "usage: stipple "+name) {
				t.Errorf("%s -h does not start with its synopsis:\n%s", name, h)
			}
			if !strings.Contains(h, "\nExamples:\n  stipple "+name) {
				t.Errorf("%s -h has no example:\n%s", name, h)
			}
			if m := singleDash.FindString(h); m != "" {
				t.Errorf("%s -h writes a flag with one dash (%q):\n%s", name, m, h)
			}
			// Every flag that takes a value states its default.
			lines := strings.Split(h, "\n")
			for i, l := range lines {
				if strings.HasPrefix(l, "  --") && strings.Contains(l[4:], " ") {
					text := ""
					for j := i + 1; j < len(lines) && strings.HasPrefix(lines[j], "      "); j++ {
						text += lines[j]
					}
					if !strings.Contains(text, "default") {
						t.Errorf("%s: flag %s does not state its default: %q", name, strings.TrimSpace(l), text)
					}
				}
			}
			for _, alt := range [][]string{{"help", name}, {name, "--help"}} {
				code, h2, _ := runCLI(alt...)
				if code != 0 || h2 != h {
					t.Errorf("%q: exit %d, output differs from %s -h:\n%s", alt, code, name, h2)
				}
			}
			if !strings.Contains(general, "\n  "+name+" ") {
				t.Errorf("stipple help does not list %s:\n%s", name, general)
			}
		})
	}
	if !strings.Contains(general, "DIR") {
		t.Errorf("general help lacks serve's DIR:\n%s", general)
	}
	_, serve, _ := runCLI("serve", "--help")
	if !strings.HasPrefix(serve, "usage: stipple serve DIR") {
		t.Errorf("serve --help does not mention DIR:\n%s", serve)
	}
	_, demo, _ := runCLI("demo", "-h")
	if strings.Contains(demo, "--out") || strings.Contains(demo, "map file's") {
		t.Errorf("demo -h lists --out or map-file notes that mean nothing for the demo:\n%s", demo)
	}
	for _, v := range []string{"version", "--version"} {
		code, out, _ := runCLI(v)
		if code != 0 || !strings.HasPrefix(out, "stipple ") {
			t.Errorf("%s: exit %d, %q", v, code, out)
		}
	}
}

// TestEditDistance checks worked values of the optimal-string-alignment
// distance: "kitten" → "sitting" is 3 (the textbook Levenshtein example),
// a swap of neighbours is 1 (Damerau 1964), and "ca" → "abc" is 3, where
// the unrestricted Damerau–Levenshtein distance would give 2 (the example
// that tells the two apart, from memory).
func TestEditDistance(t *testing.T) {
	for _, c := range []struct {
		a, b string
		want int
	}{{"kitten", "sitting", 3}, {"", "abc", 3}, {"maxzoom", "max-zoom", 1}, {"flaw", "lawn", 2}, {"same", "same", 0}, {"tabel", "table", 1}, {"ca", "ac", 1}, {"ca", "abc", 3}} {
		if got := editDistance(c.a, c.b); got != c.want {
			t.Errorf("editDistance(%q, %q) = %d; want %d", c.a, c.b, got, c.want)
		}
	}
}

// TestBadCommandLines: for every command, an unknown flag, a bad value and
// an out-of-range value exit 2 with a one-line message and that command's
// short usage, never the whole list of commands.
func TestBadCommandLines(t *testing.T) {
	m := writeMap(t, abs(t, "../../testdata/small/areas.geojson"), t.TempDir(), "")
	cases := []struct {
		args []string
		want string // in the message line
	}{
		{[]string{"render", m, "--maxzoom", "3"}, "unknown flag --maxzoom; did you mean --max-zoom?"},
		{[]string{"render", m, "--max-zoom", "x"}, `invalid value "x" for flag --max-zoom`},
		{[]string{"render", m, "--per-dot", "0"}, "--per-dot 0: want people per dot of at least 0.01"},
		{[]string{"render", m, "--per-dot", "-3"}, "--per-dot -3"},
		{[]string{"render", m, "--seed", "-3"}, "--seed -3: seeds are whole numbers from 0 up"},
		{[]string{"render", m, "--tile-size", "300"}, "--tile-size 300: want 256 or 512"},
		{[]string{"render", m, "--per-dot", "NaN"}, "--per-dot NaN: want a finite number"},
		{[]string{"render", m, "--per-dot", "inf"}, "--per-dot +Inf: want a finite number"},
		{[]string{"render", m, "--workers", "0"}, "--workers 0: want at least 1 worker"},
		{[]string{"render", m, "--min-zoom", "20", "--max-zoom", "19"}, "zoom range 20–19"},
		{[]string{"render"}, "render takes one map file"},
		{[]string{"demo", "--out", "x"}, "unknown flag --out"},
		{[]string{"demo", "--max-zoom", "23"}, "--max-zoom 23: want a zoom from 0 to 22"},
		{[]string{"inspect", "a.shp", "--mapp", "m.toml"}, "unknown flag --mapp; did you mean --map?"},
		{[]string{"inspect"}, "inspect takes one file"},
		{[]string{"init", "a.shp", "--tabel", "c.csv"}, "unknown flag --tabel; did you mean --table?"},
		{[]string{"serve", "--prot", "80", "."}, "unknown flag --prot; did you mean --port?"},
		{[]string{"serve", "--port", "70000", "."}, "--port 70000: want a port from 0 to 65535"},
		{[]string{"print", m, "--dpi", "-5"}, "--dpi -5: want 36 to 1200 dots per inch"},
		{[]string{"print", m, "--dot-mm", "0"}, "--dot-mm 0: want a dot diameter above 0"},
		{[]string{"print", m, "--dpi", "NaN"}, "--dpi NaN: want a finite number"},
		{[]string{"print", m, "--page", "A7"}, "--page"},
		{[]string{"print", m, "--seed", "-1"}, "--seed -1: seeds are whole numbers from 0 up"},
		{[]string{"batch", "b.toml", "--worker", "2"}, "unknown flag --worker; did you mean --workers?"},
		{[]string{"batch", "b.toml", "--memory", "lots"}, "--memory"},
		{[]string{"plan", m, "--shards", "0"}, "--shards 0: want at least 1 part"},
		{[]string{"plan", m, "--shard", "3"}, "unknown flag --shard; did you mean --shards?"},
		{[]string{"bench", "--per-dot", "0"}, "--per-dot 0"},
		{[]string{"bench", "--opacity", "0"}, "--opacity 0: want an opacity above 0"},
		{[]string{"bench", "--max-zoom", "NaN"}, `invalid value "NaN" for flag --max-zoom`},
		{[]string{"measure", m, "--cvs", "x.csv"}, "unknown flag --cvs; did you mean --csv?"},
		{[]string{"measure"}, "measure takes one map file"},
		{[]string{"version", "--short"}, "unknown flag --short"},
		{[]string{"publish", "out", "site", "--ur", "https://x/"}, "unknown flag --ur; did you mean --url?"},
		{[]string{"publish", "out"}, "publish takes a rendered folder and a destination"},
		{[]string{"still", m, "--veiw", "3/0/0"}, "unknown flag --veiw; did you mean --view?"},
		{[]string{"still", m, "--size", "0x0"}, "--size"},
		{[]string{"help", "rendr"}, `unknown command "rendr"; did you mean "render"?`},
		{[]string{"rendr", m}, `unknown command "rendr"; did you mean "render"?`},
		{[]string{}, "no command given"},
	}
	for _, c := range cases {
		t.Run(strings.Join(c.args, " "), func(t *testing.T) {
			code, stdout, stderr := runCLI(c.args...)
			if code != 2 {
				t.Fatalf("exit %d; want 2 (stderr %q)", code, stderr)
			}
			if stdout != "" {
				t.Errorf("wrote to stdout: %q", stdout)
			}
			lines := strings.Split(strings.TrimRight(stderr, "\n"), "\n")
			if !strings.HasPrefix(lines[0], "stipple: ") || !strings.Contains(lines[0], c.want) {
				t.Errorf("first line %q; want it to contain %q", lines[0], c.want)
			}
			if len(lines) > 3 {
				t.Errorf("%d lines; want the message and the short usage only:\n%s", len(lines), stderr)
			}
			if cmd := first(c.args); docs[cmd] != nil && cmd != "help" {
				if len(lines) < 2 || lines[1] != "usage: stipple "+docs[cmd].Usage {
					t.Errorf("no short usage of %s:\n%s", cmd, stderr)
				}
			}
		})
	}
}

// TestFlagsWinOverTheMapFile: a flag given on the command line replaces
// the map-file key whatever its value, 0 included (here --seed 0 over the
// file's seed 3), and --workers far above the cores is lowered, not fatal.
func TestFlagsWinOverTheMapFile(t *testing.T) {
	out := t.TempDir()
	m := writeMap(t, abs(t, "../../testdata/small/areas.geojson"), out, "")
	if b, _ := os.ReadFile(m); !strings.Contains(string(b), "seed = 3\n") {
		t.Fatalf("test map's seed is not 3:\n%s", b)
	}
	code, _, stderr := runCLI("render", m, "--seed", "0", "--min-zoom", "2", "--max-zoom", "3", "--workers", "1000000")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	limit := maxWorkersPerCore * runtime.NumCPU()
	if want := "--workers 1000000 is more than 4 per core; using " + strconv.Itoa(limit); !strings.Contains(stderr, want) {
		t.Errorf("stderr %q lacks %q", stderr, want)
	}
	b, err := os.ReadFile(filepath.Join(out, "map.json"))
	if err != nil {
		t.Fatal(err)
	}
	var md struct {
		Seed    uint64 `json:"seed"`
		MinZoom int    `json:"minzoom"`
		MaxZoom int    `json:"maxzoom"`
	}
	if err := json.Unmarshal(b, &md); err != nil {
		t.Fatal(err)
	}
	if md.Seed != 0 {
		t.Errorf("map.json seed %d; want 0 from --seed 0", md.Seed)
	}
}

// TestInspectDotsAgreeWithRender: inspect --map prints the dots render
// draws, category by category (the same allocation, mapjob.Load's
// in.Dots), not count ÷ people_per_dot rounded on its own.
func TestInspectDotsAgreeWithRender(t *testing.T) {
	input := abs(t, "../../testdata/small/areas.geojson")
	out := t.TempDir()
	m := writeMap(t, input, out, "")
	code, insp, stderr := runCLI("inspect", input, "--map", m)
	if code != 0 {
		t.Fatalf("inspect: exit %d: %s", code, stderr)
	}
	code, rend, stderr := runCLI("render", m, "--min-zoom", "2", "--max-zoom", "3")
	if code != 0 {
		t.Fatalf("render: exit %d: %s", code, stderr)
	}
	inspRE := regexp.MustCompile(`(?m)^  (\S.*?)\s+[\d,.]+ people\s+(\d+) dots \(expected`)
	rendRE := regexp.MustCompile(`(?m)^  (\S.*?)\s+[\d,.]+ people\s+(\d+) dots \(expected`)
	a, b := inspRE.FindAllStringSubmatch(insp, -1), rendRE.FindAllStringSubmatch(rend, -1)
	if len(a) < 2 || len(a) != len(b) {
		t.Fatalf("inspect lists %d categories, render %d:\n%s\n%s", len(a), len(b), insp, rend)
	}
	for i := range a {
		if a[i][1] != b[i][1] || a[i][2] != b[i][2] {
			t.Errorf("inspect says %s: %s dots; render drew %s: %s", a[i][1], a[i][2], b[i][1], b[i][2])
		}
	}
	if !strings.Contains(insp, "exactly the dots render allocates") {
		t.Errorf("inspect does not say its dots are render's:\n%s", insp)
	}
}

// TestInitFromAnotherFolder: init run in one folder on the shared counties
// shapefile (counts joined from the shared CSV) writes a map file in a
// subfolder whose paths are relative to it, with the area field left out
// of the categories; the command it prints then renders.
func TestInitFromAnotherFolder(t *testing.T) {
	shp := reftool.SharedData(t, "us-counties-shp/us-counties.shp")
	csv := reftool.SharedData(t, "us-counties-counts.csv")
	geojson := reftool.SharedData(t, "us-counties.geojson")
	work := t.TempDir()
	t.Chdir(work)
	relTo := func(p string) string {
		r, err := filepath.Rel(work, p)
		if err != nil {
			t.Fatal(err)
		}
		return r
	}
	code, stdout, stderr := runCLI("init", "-o", "mymap/init.toml", relTo(shp), "--table", relTo(csv))
	if code != 0 {
		t.Fatalf("init: exit %d: %s", code, stderr)
	}
	cmdRE := regexp.MustCompile(`then: (stipple render \S+)`)
	got := cmdRE.FindStringSubmatch(stdout)
	if got == nil || got[1] != "stipple render mymap/init.toml" {
		t.Fatalf("init did not print the command that renders it: %q", stdout)
	}
	b, err := os.ReadFile("mymap/init.toml")
	if err != nil {
		t.Fatal(err)
	}
	text := string(b)
	wantFile, _ := filepath.Rel(filepath.Join(work, "mymap"), shp)
	for _, want := range []string{"file = " + strconv.Quote(filepath.ToSlash(wantFile)), `key = "geoid"`, "\n[[category]]\nkey = \"grp_a\"", "# fields = [\"aland_km2\"]"} {
		if !strings.Contains(text, want) {
			t.Errorf("init.toml lacks %q:\n%s", want, text)
		}
	}
	code, _, stderr = runCLI("render", "mymap/init.toml", "--min-zoom", "0", "--max-zoom", "1", "--per-dot", "20000")
	if code != 0 {
		t.Fatalf("render mymap/init.toml: exit %d: %s", code, stderr)
	}
	var md struct {
		Categories []struct {
			Key string `json:"key"`
		} `json:"categories"`
	}
	mj, err := os.ReadFile("mymap/us-counties-map/map.json")
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(mj, &md); err != nil {
		t.Fatal(err)
	}
	var keys []string
	for _, c := range md.Categories {
		keys = append(keys, c.Key)
	}
	if strings.Join(keys, ",") != "grp_a,grp_b,grp_c,grp_d,grp_e" {
		t.Errorf("rendered categories %v; want grp_a … grp_e and no area field", keys)
	}
	// The GeoJSON holds the counts itself: its decimal land area is
	// skipped, its whole-number groups offered.
	code, stdout, stderr = runCLI("init", relTo(geojson))
	if code != 0 {
		t.Fatalf("init geojson: exit %d: %s", code, stderr)
	}
	if strings.Contains(stdout, "\n[[category]]\nkey = \"aland_km2\"") || !strings.Contains(stdout, "\n[[category]]\nkey = \"grp_e\"") {
		t.Errorf("init on the GeoJSON offers the wrong categories:\n%s", stdout)
	}
}

func TestNotCountNames(t *testing.T) {
	for name, want := range map[string]bool{
		"aland_km2": true, "ALAND": true, "Shape_Area": true, "shape_leng": true, "OBJECTID": true, "geoid": true,
		"area_sqmi": true, "pop_density": true, "grp_a": false, "lang_c1": false, "tamsic": false, "total": false,
		"south": false, "owners": false,
	} {
		if got := notCountName.MatchString(name); got != want {
			t.Errorf("notCountName(%q) = %v; want %v", name, got, want)
		}
	}
}
