// Package theme is a map's house style: the ground under the dots, the
// typeface of the legend, print pages and viewer, and every sentence and
// word stipple prints around a map (the caution, the dot note, the credit
// prefix, the print page's legend and notes, the viewer's buttons, the
// alt text and the methods note), so that a desk can set them once and
// translate them. A map file sets it in its [theme] table or names a
// theme file (package tiles/mapfile reads both); a map made in code uses
// Default.
package theme

import (
	"fmt"
	"image/color"
	"reflect"
	"regexp"
	"strings"

	"github.com/stipple-maps/stipple/render"
)

// Theme is a resolved house style.
type Theme struct {
	// Ground is the map's ground colour in the viewer.
	Ground color.NRGBA
	// Font sets the text of the legends (PNG and SVG), the print pages
	// (PNG and PDF) and the viewer.
	Font *render.Font
	// Text holds every sentence and word around the map.
	Text Text
}

// Default is the built-in theme: DefaultGround, Liberation Sans and the
// English text.
func Default() *Theme {
	g, err := render.ParseHex(render.DefaultGround)
	if err != nil {
		panic(err) // a constant
	}
	return &Theme{Ground: g, Font: render.DefaultFont(), Text: DefaultText}
}

// Or is t, or Default when t is nil, so code holding an optional theme
// needs no check.
func Or(t *Theme) *Theme {
	if t == nil {
		return Default()
	}
	return t
}

// Merge returns base with every non-empty field of over put in its place.
func (base Text) Merge(over Text) Text {
	b := &base
	for _, f := range b.fields() {
		if v := *over.field(f.key); v != "" {
			*f.p = v
		}
	}
	return base
}

type textField struct {
	key string
	p   *string
}

// fields lists every field of t with its TOML key, in the order of the
// struct.
func (t *Text) fields() []textField {
	v := reflect.ValueOf(t).Elem()
	out := make([]textField, v.NumField())
	for i := range out {
		key, _, _ := strings.Cut(v.Type().Field(i).Tag.Get("toml"), ",")
		out[i] = textField{key, v.Field(i).Addr().Interface().(*string)}
	}
	return out
}

func (t *Text) field(key string) *string {
	for _, f := range t.fields() {
		if f.key == key {
			return f.p
		}
	}
	panic("theme: no text key " + key)
}

// languageTag is the shape of a BCP 47 language tag: subtags of letters
// and digits, 1 to 8 each, joined by hyphens, the first of letters only
// (RFC 5646, section 2.1, the "langtag" and "privateuse" forms).
var languageTag = regexp.MustCompile(`^[A-Za-z]{1,8}(-[A-Za-z0-9]{1,8})*$`)

// Check returns an error naming the first key whose text lacks one of its
// placeholders, or whose language is not shaped as a BCP 47 tag; key is
// the TOML name.
func (t Text) Check() (key string, err error) {
	if t.ViewerLanguage != "" && !languageTag.MatchString(t.ViewerLanguage) {
		return "viewer_language", fmt.Errorf("%q is not a language tag such as \"en\" or \"fr-CA\"", t.ViewerLanguage)
	}
	for _, f := range t.fields() {
		for _, ph := range Placeholders[f.key] {
			if *f.p != "" && !strings.Contains(*f.p, ph) {
				return f.key, fmt.Errorf("%q lacks %s", *f.p, ph)
			}
		}
	}
	return "", nil
}

// Fill replaces each {name} of s by its value, given as name, value pairs.
func Fill(s string, pairs ...string) string {
	var old []string
	for i := 0; i+1 < len(pairs); i += 2 {
		old = append(old, "{"+pairs[i]+"}", pairs[i+1])
	}
	return strings.NewReplacer(old...).Replace(s)
}

// DotNote is the dot note for perDot people per dot: "1 dot = 25 people".
func (t *Theme) DotNote(perDot float64) string {
	t = Or(t)
	if perDot == 1 {
		return t.Text.DotNoteOne
	}
	return Fill(t.Text.DotNote, "n", render.FormatCount(perDot))
}

// CreditLine is the credit as every output prints it, after the theme's
// prefix (render.CreditLineWith).
func (t *Theme) CreditLine(credit string) string {
	return render.CreditLineWith(Or(t).Text.CreditPrefix, credit)
}

// GroundHex is the ground as #rrggbb.
func (t *Theme) GroundHex() string { return render.Hex(Or(t).Ground) }
