package tiles

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"slices"
	"strings"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/tiles/sink"
)

// ReferenceScript is the file, beside the viewer, that carries a map's
// reference layers as a script (so the viewer reads it from file:// too):
// "window.stippleReference = {…};".
const ReferenceScript = "reference/layers.js"

const referenceFormat = "stipple-reference/1"

// refJS is the viewer's script that draws ReferenceScript's layers.
const refJS = "reference.js"

// Reference is one reference layer ready to draw: place labels, lines or
// areas in longitude/latitude, with its colour, width and place.
type Reference struct {
	// Kind is "labels", "lines" or "areas".
	Kind string
	// Above draws the layer over the dots, else under them.
	Above bool
	// Color is "#RRGGBB"; Width the line width in CSS pixels.
	Color string
	Width float64
	// Labels (kind labels), in any order: the viewer places them by rank.
	Labels []Label
	// Lines (kind lines) and Areas (kind areas; outer ring first).
	Lines []orb.LineString
	Areas []orb.Polygon
	// Key, when not "", lists the layer in a key (the viewer's key card,
	// a print page's legend) as a swatch of Color with this label, under
	// the heading KeyTitle; consecutive keyed layers with one KeyTitle
	// share the heading. The diversity shading uses it for its classes.
	Key, KeyTitle string
}

// Label is one place name.
type Label struct {
	Name string
	// Rank is 1 for the most important places; the viewer and print pages
	// place lower numbers first and hide a label that would overlap one
	// already placed.
	Rank int
	At   orb.Point
}

// SortLabels orders labels for placement: by rank, then name, then
// position, so the greedy placement is the same on every run.
func SortLabels(ls []Label) {
	slices.SortStableFunc(ls, func(a, b Label) int {
		if a.Rank != b.Rank {
			return a.Rank - b.Rank
		}
		if c := strings.Compare(a.Name, b.Name); c != 0 {
			return c
		}
		if a.At[1] != b.At[1] {
			return cmpFloat(b.At[1], a.At[1])
		}
		return cmpFloat(a.At[0], b.At[0])
	})
}

func cmpFloat(a, b float64) int {
	switch {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}

// refData is the JSON of ReferenceScript. Coordinates are rounded to 1e-6
// degrees (about 0.1 m, under a pixel at zoom 20).
type refData struct {
	Format string     `json:"format"`
	Layers []refLayer `json:"layers"`
}

type refLayer struct {
	Kind   string           `json:"kind"`
	Above  bool             `json:"above"`
	Color  string           `json:"color"`
	Width  float64          `json:"width"`
	Labels []refLabel       `json:"labels,omitempty"`
	Lines  [][][2]float64   `json:"lines,omitempty"`
	Areas  [][][][2]float64 `json:"areas,omitempty"`
	// Key and KeyTitle (omitted when empty) list the layer in the key.
	Key      string `json:"key,omitempty"`
	KeyTitle string `json:"keyTitle,omitempty"`
}

type refLabel struct {
	Name string     `json:"name"`
	Rank int        `json:"rank"`
	At   [2]float64 `json:"at"`
}

func round6(p orb.Point) [2]float64 {
	return [2]float64{math.Round(p[0]*1e6) / 1e6, math.Round(p[1]*1e6) / 1e6}
}

func roundLine(l []orb.Point) [][2]float64 {
	out := make([][2]float64, 0, len(l))
	for _, p := range l {
		q := round6(p)
		if n := len(out); n > 0 && out[n-1] == q {
			continue
		}
		out = append(out, q)
	}
	return out
}

// ReferenceJS is the content of ReferenceScript for refs. Labels are
// written in placement order (SortLabels); names are JSON-escaped,
// including <, > and &, so no name can end the script.
func ReferenceJS(refs []Reference) ([]byte, error) {
	d := refData{Format: referenceFormat, Layers: []refLayer{}}
	for _, r := range refs {
		l := refLayer{Kind: r.Kind, Above: r.Above, Color: r.Color, Width: r.Width, Key: r.Key, KeyTitle: r.KeyTitle}
		ls := slices.Clone(r.Labels)
		SortLabels(ls)
		for _, lb := range ls {
			l.Labels = append(l.Labels, refLabel{Name: lb.Name, Rank: lb.Rank, At: round6(lb.At)})
		}
		for _, ln := range r.Lines {
			if q := roundLine(ln); len(q) >= 2 {
				l.Lines = append(l.Lines, q)
			}
		}
		for _, poly := range r.Areas {
			var rings [][][2]float64
			for _, ring := range poly {
				if q := roundLine(ring); len(q) >= 3 {
					rings = append(rings, q)
				}
			}
			if len(rings) > 0 {
				l.Areas = append(l.Areas, rings)
			}
		}
		d.Layers = append(d.Layers, l)
	}
	b, err := json.Marshal(d)
	if err != nil {
		return nil, fmt.Errorf("tiles: reference: %w", err)
	}
	return []byte("window.stippleReference = " + string(b) + ";\n"), nil
}

// PutReference writes ReferenceScript into out, or removes it when refs is
// empty (a rerun without reference layers). Write it before PutViewer,
// which links the viewer to it when it is there.
func PutReference(ctx context.Context, out sink.Sink, refs []Reference) error {
	if len(refs) == 0 {
		return out.Delete(ctx, ReferenceScript)
	}
	js, err := ReferenceJS(refs)
	if err != nil {
		return err
	}
	return sink.PutFile(ctx, out, ReferenceScript, js)
}

// hasReference reports whether out holds ReferenceScript.
func hasReference(ctx context.Context, out sink.Sink) (bool, error) {
	found := false
	err := out.List(ctx, "reference/", func(p string, _ int64) error {
		if p == ReferenceScript {
			found = true
		}
		return nil
	})
	return found, err
}
