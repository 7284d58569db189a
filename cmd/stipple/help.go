package main

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"reflect"
	"runtime"
	"slices"
	"strings"
)

// cmdDoc is a command's help: what "stipple help NAME" and "stipple NAME
// -h" print, above the flags. Each command file registers its own with
// register, next to the flags it defines; parse finds it by the flag set's
// name, so a command only needs flag.NewFlagSet(NAME, …) and parse.
type cmdDoc struct {
	// Name is the command word, as in the dispatch switch.
	Name string
	// Usage is the synopsis after "stipple ", e.g. "render MAP.toml [flags]".
	Usage string
	// Short is the one-line summary in the list of commands.
	Short string
	// About is one paragraph: what the command does.
	About string
	// Examples are one or two command lines, each with an optional
	// "# comment" after it.
	Examples []string
	// Order places the command in the list of commands (lower first).
	Order int
}

// docs holds every registered command's help, by name.
var docs = map[string]*cmdDoc{}

// register adds a command's help and returns it.
func register(d cmdDoc) *cmdDoc {
	if _, dup := docs[d.Name]; dup {
		panic("stipple: help registered twice for " + d.Name)
	}
	docs[d.Name] = &d
	return &d
}

// sortedDocs returns the registered commands in listing order.
func sortedDocs() []*cmdDoc {
	out := make([]*cmdDoc, 0, len(docs))
	for _, d := range docs {
		out = append(out, d)
	}
	slices.SortFunc(out, func(a, b *cmdDoc) int {
		if a.Order != b.Order {
			return a.Order - b.Order
		}
		return strings.Compare(a.Name, b.Name)
	})
	return out
}

// generalHelp is "stipple help": every command with its summary.
func generalHelp() string {
	var b strings.Builder
	b.WriteString("stipple turns people counted per area into dot-density maps.\n\nUsage:\n\n  stipple COMMAND [arguments] [flags]\n\nCommands:\n\n")
	ds := sortedDocs()
	w := 0
	for _, d := range ds {
		w = max(w, len(d.Name))
	}
	for _, d := range ds {
		fmt.Fprintf(&b, "  %-*s  %s\n", w, d.Name, d.Short)
	}
	b.WriteString("\nRun \"stipple help COMMAND\" (or \"stipple COMMAND --help\") for a command's flags and examples.\n")
	b.WriteString("Flags are written --name VALUE or --name=VALUE, before or after the arguments.\n")
	b.WriteString("Exit codes: 0 done, 1 the map or its data could not be made, 2 wrong command line,\n130 interrupted (Ctrl-C), 143 stopped (SIGTERM).\n")
	return b.String()
}

// docFor returns the help of the flag set's command, or a plain one for a
// command that registered none.
func docFor(fs *flag.FlagSet) *cmdDoc {
	if d, ok := docs[fs.Name()]; ok {
		return d
	}
	return &cmdDoc{Name: fs.Name(), Usage: fs.Name() + " [flags]"}
}

// commandHelp is a command's full help: synopsis, paragraph, flags,
// examples.
func commandHelp(fs *flag.FlagSet) string {
	d := docFor(fs)
	var b strings.Builder
	fmt.Fprintf(&b, "usage: stipple %s\n", d.Usage)
	if d.About != "" {
		fmt.Fprintf(&b, "\n%s\n", wrap(d.About, 76, ""))
	}
	if flags := flagHelp(fs); flags != "" {
		b.WriteString("\nFlags:\n")
		b.WriteString(flags)
	}
	if len(d.Examples) > 0 {
		b.WriteString("\nExamples:\n")
		for _, e := range d.Examples {
			fmt.Fprintf(&b, "  %s\n", e)
		}
	}
	return b.String()
}

// shortUsage is what a wrong command line prints after its message: the
// synopsis and where the rest is.
func shortUsage(d *cmdDoc) string {
	return fmt.Sprintf("usage: stipple %s\nRun \"stipple help %s\" for its flags and examples.\n", d.Usage, d.Name)
}

// flagHelp lists the flags: "--name VALUE", then the usage indented, with
// the default unless the usage states it or it is a zero value.
func flagHelp(fs *flag.FlagSet) string {
	var b strings.Builder
	fs.VisitAll(func(f *flag.Flag) {
		if f.Usage == "" {
			return // an alias kept for old command lines (init's -o)
		}
		name, usage := flag.UnquoteUsage(f)
		line := "  --" + f.Name
		if name != "" {
			line += " " + valueName(name)
		}
		if !strings.Contains(usage, "(default") && !isZeroDefault(f) {
			def := f.DefValue
			if isStringFlag(f) {
				def = fmt.Sprintf("%q", def)
			}
			usage += " (default " + def + ")"
		}
		fmt.Fprintf(&b, "%s\n%s\n", line, wrap(usage, 76, "      "))
	})
	return b.String()
}

// valueName is the placeholder after a flag in help: the usage's
// back-quoted word, else one from the type.
func valueName(name string) string {
	switch name {
	case "int", "uint":
		return "N"
	case "float":
		return "NUMBER"
	case "string":
		return "TEXT"
	}
	return strings.ToUpper(name)
}

func isStringFlag(f *flag.Flag) bool {
	g, ok := f.Value.(flag.Getter)
	if !ok {
		return false
	}
	_, s := g.Get().(string)
	return s
}

// isZeroDefault reports a default not worth printing: false, 0 or "".
func isZeroDefault(f *flag.Flag) bool {
	switch f.DefValue {
	case "", "0", "false":
		return true
	}
	return false
}

// wrap folds text at width, indenting every line by indent.
func wrap(text string, width int, indent string) string {
	var b strings.Builder
	line := indent
	for _, w := range strings.Fields(text) {
		if len(line) > len(indent) && len(line)+1+len(w) > width {
			b.WriteString(line + "\n")
			line = indent
		}
		if len(line) > len(indent) {
			line += " "
		}
		line += w
	}
	b.WriteString(line)
	return b.String()
}

// helpRequest is returned by parse for -h, --help: run prints the
// command's help on stdout and exits 0.
type helpRequest struct{ fs *flag.FlagSet }

func (h helpRequest) Error() string { return "help requested" }

// Is makes errors.Is(err, flag.ErrHelp) true for a help request.
func (h helpRequest) Is(target error) bool { return target == flag.ErrHelp }

// parse parses flags that may come before or after the positional
// arguments, then checks the values every command shares a rule for
// (flagRules). Errors are usageErrors carrying the flag set, so run prints
// that command's short usage.
func parse(fs *flag.FlagSet, args []string) ([]string, error) {
	out := fs.Output()
	fs.SetOutput(io.Discard)
	fs.Usage = func() {}
	var pos []string
	for {
		if err := fs.Parse(args); err != nil {
			if errors.Is(err, flag.ErrHelp) {
				return nil, helpRequest{fs}
			}
			return nil, flagError(fs, err)
		}
		args = fs.Args()
		if len(args) == 0 {
			break
		}
		pos = append(pos, args[0])
		args = args[1:]
	}
	if err := checkFlags(fs, out); err != nil {
		return nil, err
	}
	return pos, nil
}

// usageErr is a formatted usageError.
func usageErr(format string, a ...any) error {
	return usageError{fmt.Sprintf(format, a...)}
}

// flagError rewrites the flag package's messages with -- names and, for
// an unknown flag, the nearest known one.
func flagError(fs *flag.FlagSet, err error) error {
	msg := err.Error()
	const undefined = "flag provided but not defined: -"
	if name, ok := strings.CutPrefix(msg, undefined); ok {
		s := fmt.Sprintf("%s: unknown flag --%s", fs.Name(), name)
		if near := nearestFlag(fs, name); near != "" {
			s += fmt.Sprintf("; did you mean --%s?", near)
		}
		return usageError{s}
	}
	msg = strings.Replace(msg, "for flag -", "for flag --", 1)
	msg = strings.Replace(msg, "needs an argument: -", "needs an argument: --", 1)
	msg = strings.Replace(msg, "invalid boolean flag ", "invalid boolean flag --", 1)
	return usageError{fs.Name() + ": " + msg}
}

// nearestFlag is the defined flag closest to name by edit distance, when
// it is close enough to be a typo: at most a third of the name's letters
// (at least 1, at most 3 edits).
func nearestFlag(fs *flag.FlagSet, name string) string {
	best, bestD := "", math.MaxInt
	fs.VisitAll(func(f *flag.Flag) {
		if d := editDistance(name, f.Name); d < bestD || (d == bestD && f.Name < best) {
			best, bestD = f.Name, d
		}
	})
	if bestD <= min(3, max(1, len(name)/3)) {
		return best
	}
	return ""
}

// editDistance is the optimal-string-alignment distance between a and b,
// over bytes: the fewest insertions, deletions, substitutions (Levenshtein
// 1966) and swaps of two neighbouring letters (Damerau 1964) that turn a
// into b, no substring edited twice. A swap is the commonest typo
// ("--tabel"), so it counts as one edit.
func editDistance(a, b string) int {
	d := make([][]int, len(a)+1)
	for i := range d {
		d[i] = make([]int, len(b)+1)
		d[i][0] = i
	}
	for j := range d[0] {
		d[0][j] = j
	}
	for i := 1; i <= len(a); i++ {
		for j := 1; j <= len(b); j++ {
			cost := 1
			if a[i-1] == b[j-1] {
				cost = 0
			}
			d[i][j] = min(d[i-1][j]+1, d[i][j-1]+1, d[i-1][j-1]+cost)
			if i > 1 && j > 1 && a[i-1] == b[j-2] && a[i-2] == b[j-1] {
				d[i][j] = min(d[i][j], d[i-2][j-2]+1)
			}
		}
	}
	return d[len(a)][len(b)]
}

// maxWorkersPerCore caps --workers: more goroutines than a few per core
// only add memory and scheduling (common practice).
const maxWorkersPerCore = 4

// flagRule checks a flag's value wherever a command defines a flag of
// that name and the command line sets it: one range for every command,
// and the same range as the map-file key it replaces.
type flagRule func(v float64) string

// flagRules are the shared ranges, by flag name. Each returns "" for a
// good value, else what is wanted.
var flagRules = map[string]flagRule{
	"seed": func(v float64) string {
		return unless(v >= 0, "seeds are whole numbers from 0 up, as the map file's seed")
	},
	"per-dot": func(v float64) string {
		return unless(v >= 0.01, "want people per dot of at least 0.01, as the map file's people_per_dot")
	},
	"min-zoom": zoomRule, "max-zoom": zoomRule,
	"tile-size": func(v float64) string { return unless(v == 256 || v == 512, "want 256 or 512, as tiles.size") },
	"workers":   func(v float64) string { return unless(v >= 1, "want at least 1 worker") },
	"shards":    func(v float64) string { return unless(v >= 1, "want at least 1 part") },
	"port":      func(v float64) string { return unless(v >= 0 && v <= 65535, "want a port from 0 to 65535") },
	// render/page's limits (MinDPI, MaxDPI, maxDotMM).
	"dpi": func(v float64) string { return unless(v >= 36 && v <= 1200, "want 36 to 1200 dots per inch") },
	"dot-mm": func(v float64) string {
		return unless(v > 0 && v <= 10, "want a dot diameter above 0 and at most 10 mm")
	},
	"diameter": func(v float64) string {
		return unless(v > 0 && v <= 64, "want a diameter above 0 and at most 64 pixels, as dots.diameter")
	},
	"opacity": func(v float64) string {
		return unless(v > 0 && v <= 1, "want an opacity above 0 and at most 1, as dots.opacity")
	},
	"people": func(v float64) string { return unless(v >= 1, "want at least 1 person") },
	"areas":  func(v float64) string { return unless(v >= 1, "want at least 1 area") },
}

func zoomRule(v float64) string {
	return unless(v >= 0 && v <= 22, "want a zoom from 0 to 22, as tiles.min_zoom and max_zoom")
}

func unless(ok bool, why string) string {
	if ok {
		return ""
	}
	return why
}

// numberOf returns a numeric flag's value.
func numberOf(f *flag.Flag) (float64, bool) {
	g, ok := f.Value.(flag.Getter)
	if !ok {
		return 0, false
	}
	v := reflect.ValueOf(g.Get())
	switch v.Kind() {
	case reflect.Int, reflect.Int64, reflect.Int32:
		return float64(v.Int()), true
	case reflect.Uint, reflect.Uint64, reflect.Uint32:
		return float64(v.Uint()), true
	case reflect.Float64, reflect.Float32:
		return v.Float(), true
	}
	return 0, false
}

// checkFlags applies the shared rules to the flags the command line set:
// every float must be finite, named flags must be in range, and --workers
// above maxWorkersPerCore × cores is lowered to that, with a note on out.
func checkFlags(fs *flag.FlagSet, out io.Writer) error {
	var err error
	fs.Visit(func(f *flag.Flag) {
		if err != nil {
			return
		}
		v, ok := numberOf(f)
		if !ok {
			return
		}
		if math.IsNaN(v) || math.IsInf(v, 0) {
			err = usageErr("%s: --%s %s: want a finite number", fs.Name(), f.Name, f.Value)
			return
		}
		if rule := flagRules[f.Name]; rule != nil {
			if why := rule(v); why != "" {
				err = usageErr("%s: --%s %s: %s", fs.Name(), f.Name, f.Value, why)
				return
			}
		}
		if f.Name == "workers" {
			if limit := maxWorkersPerCore * runtime.NumCPU(); v > float64(limit) {
				fmt.Fprintf(out, "stipple: --workers %s is more than %d per core; using %d\n", f.Value, maxWorkersPerCore, limit)
				f.Value.Set(fmt.Sprint(limit))
			}
		}
	})
	return err
}

// isSet reports whether the command line set the named flag.
func isSet(fs *flag.FlagSet, name string) bool {
	set := false
	fs.Visit(func(f *flag.Flag) { set = set || f.Name == name })
	return set
}
