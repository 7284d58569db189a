// Package theme is a map's house style: the ground under the dots, the
// typeface of the legend, print pages and viewer, and every sentence and
// word stipple prints around a map (the caution, the dot note, the credit
// prefix, the print legend's headings), so that a desk can set them once
// and translate them. A map file sets it in its [theme] table or names a
// theme file (package tiles/mapfile reads both); a map made in code uses
// Default.
package theme

import (
	"fmt"
	"image/color"
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

// Text is the words of a theme. Fields with placeholders name them in
// braces; Fill replaces them.
type Text struct {
	// CreditPrefix goes before the credit: "Source: ". A credit that
	// already starts with it, or with a word and a colon, is kept as
	// written (render.CreditLineWith).
	CreditPrefix string `toml:"credit_prefix"`
	// Caution is the full caution of the legends, viewer and print pages.
	Caution string `toml:"caution"`
	// CautionShort is the one line that stays when the viewer's key folds.
	CautionShort string `toml:"caution_short"`
	// DotNote is the dot note, with {n} for the people per dot:
	// "1 dot = {n} people".
	DotNote string `toml:"dot_note"`
	// DotNoteOne is the dot note when a dot is one person.
	DotNoteOne string `toml:"dot_note_one"`
	// NotDrawn says how many people have no dot: {people}, {dots}.
	NotDrawn string `toml:"not_drawn"`
	// BeyondLimit says how many people are beyond the tiles' latitude
	// limit: {people}.
	BeyondLimit string `toml:"beyond_limit"`
	// RowsWithoutArea says how many people are in count rows that match no
	// area: {people}.
	RowsWithoutArea string `toml:"rows_without_area"`
	// People heads the print legend's people column.
	People string `toml:"people"`
	// Dots heads the print legend's dots column.
	Dots string `toml:"dots"`
	// All names the print legend's total row.
	All string `toml:"all"`
	// Scale is the print scale bar's caption: {denominator}, {latitude}.
	Scale string `toml:"scale"`
	// ScaleUndefined replaces it when the projection has no scale at the
	// map's centre.
	ScaleUndefined string `toml:"scale_undefined"`

	// ViewerLanguage is the language of these words as a BCP 47 tag
	// ("en", "fr", "de-CH"), which the viewer's pages declare (lang) so
	// screen readers pronounce them right.
	ViewerLanguage string `toml:"viewer_language"`
	// ViewerMapLabel is what a screen reader says of the viewer's map, with
	// {title} for the map's title.
	ViewerMapLabel string `toml:"viewer_map_label"`
	// ViewerStillAlt describes the still that an embed shows without
	// JavaScript, with {title} for the map's title.
	ViewerStillAlt string `toml:"viewer_still_alt"`
	// ViewerControls names the viewer's group of zoom buttons for screen
	// readers.
	ViewerControls string `toml:"viewer_controls"`
	// ViewerZoomIn names the viewer's zoom-in button.
	ViewerZoomIn string `toml:"viewer_zoom_in"`
	// ViewerZoomInTip is the zoom-in button's tooltip, naming its keyboard
	// key.
	ViewerZoomInTip string `toml:"viewer_zoom_in_tip"`
	// ViewerZoomOut names the viewer's zoom-out button.
	ViewerZoomOut string `toml:"viewer_zoom_out"`
	// ViewerZoomOutTip is the zoom-out button's tooltip, naming its
	// keyboard key.
	ViewerZoomOutTip string `toml:"viewer_zoom_out_tip"`
	// ViewerFit is the button that shows the whole map.
	ViewerFit string `toml:"viewer_fit"`
	// ViewerFitTip is the fit button's tooltip, naming its keyboard key.
	ViewerFitTip string `toml:"viewer_fit_tip"`
	// ViewerAreas is the button that draws the counting areas' boundaries.
	ViewerAreas string `toml:"viewer_areas"`
	// ViewerAreasTip is the areas button's tooltip.
	ViewerAreasTip string `toml:"viewer_areas_tip"`
	// ViewerHideKey is the button that folds the viewer's key.
	ViewerHideKey string `toml:"viewer_hide_key"`
	// ViewerShowKey is the same button once the key is folded.
	ViewerShowKey string `toml:"viewer_show_key"`
	// ViewerShare is a legend count's tooltip: {share} is the category's
	// share of all people, "12.5%".
	ViewerShare string `toml:"viewer_share"`
	// ViewerMapShown names, for screen readers, the switch between the
	// maps of a viewer with several.
	ViewerMapShown string `toml:"viewer_map_shown"`
	// ViewerCompare is the button that shows two maps side by side.
	ViewerCompare string `toml:"viewer_compare"`
	// ViewerRightShows names the list that picks the map right of the
	// divider.
	ViewerRightShows string `toml:"viewer_right_shows"`
	// ViewerDivider names the divider between the two compared maps.
	ViewerDivider string `toml:"viewer_divider"`
	// ViewerLeftSide heads the key of the map left of the divider.
	ViewerLeftSide string `toml:"viewer_left_side"`
	// ViewerRightSide heads the key of the map right of the divider.
	ViewerRightSide string `toml:"viewer_right_side"`
}

// DefaultText is the English text.
var DefaultText = Text{
	CreditPrefix:    render.DefaultCreditPrefix,
	Caution:         render.Caution,
	CautionShort:    render.CautionShort,
	DotNote:         "1 dot = {n} people",
	DotNoteOne:      "1 dot = 1 person",
	NotDrawn:        "{people} people ({dots} dots) are not drawn; map.json lists the areas and why.",
	BeyondLimit:     "{people} people live in areas beyond the tile projection's latitude limit (85.05° north or south) and are not on the tiles.",
	RowsWithoutArea: "{people} people are in count rows that match no area and are not on the map.",
	People:          "people",
	Dots:            "dots",
	All:             "All",
	Scale:           "Scale 1 : {denominator}, true at the map centre ({latitude})",
	ScaleUndefined:  "Scale not defined at the map centre.",

	ViewerLanguage:   "en",
	ViewerMapLabel:   "{title}. Dot-density map: drag or use the arrow keys to move, + and - to zoom.",
	ViewerStillAlt:   "{title}: a still of the whole map with its key; the zoomable map needs JavaScript.",
	ViewerControls:   "Map view",
	ViewerZoomIn:     "Zoom in",
	ViewerZoomInTip:  "Zoom in (+)",
	ViewerZoomOut:    "Zoom out",
	ViewerZoomOutTip: "Zoom out (-)",
	ViewerFit:        "Fit",
	ViewerFitTip:     "Show the whole map (0)",
	ViewerAreas:      "Areas",
	ViewerAreasTip:   "Draw the boundaries of the counting areas",
	ViewerHideKey:    "Hide key",
	ViewerShowKey:    "Show key",
	ViewerShare:      "{share} of all",
	ViewerMapShown:   "Map shown",
	ViewerCompare:    "Compare",
	ViewerRightShows: "Right side shows",
	ViewerDivider:    "Divider between the two maps",
	ViewerLeftSide:   "Left of the divider",
	ViewerRightSide:  "Right of the divider",
}

// Placeholders lists, for each Text key (its TOML name) that has them,
// the placeholders its text must hold.
var Placeholders = map[string][]string{
	"dot_note":          {"{n}"},
	"not_drawn":         {"{people}", "{dots}"},
	"beyond_limit":      {"{people}"},
	"rows_without_area": {"{people}"},
	"scale":             {"{denominator}", "{latitude}"},
	"viewer_share":      {"{share}"},
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

func (t *Text) fields() []textField {
	return []textField{
		{"credit_prefix", &t.CreditPrefix}, {"caution", &t.Caution}, {"caution_short", &t.CautionShort},
		{"dot_note", &t.DotNote}, {"dot_note_one", &t.DotNoteOne}, {"not_drawn", &t.NotDrawn},
		{"beyond_limit", &t.BeyondLimit}, {"rows_without_area", &t.RowsWithoutArea},
		{"people", &t.People}, {"dots", &t.Dots}, {"all", &t.All},
		{"scale", &t.Scale}, {"scale_undefined", &t.ScaleUndefined},
		{"viewer_language", &t.ViewerLanguage}, {"viewer_map_label", &t.ViewerMapLabel},
		{"viewer_still_alt", &t.ViewerStillAlt}, {"viewer_controls", &t.ViewerControls},
		{"viewer_zoom_in", &t.ViewerZoomIn}, {"viewer_zoom_in_tip", &t.ViewerZoomInTip},
		{"viewer_zoom_out", &t.ViewerZoomOut}, {"viewer_zoom_out_tip", &t.ViewerZoomOutTip},
		{"viewer_fit", &t.ViewerFit}, {"viewer_fit_tip", &t.ViewerFitTip},
		{"viewer_areas", &t.ViewerAreas}, {"viewer_areas_tip", &t.ViewerAreasTip},
		{"viewer_hide_key", &t.ViewerHideKey}, {"viewer_show_key", &t.ViewerShowKey},
		{"viewer_share", &t.ViewerShare}, {"viewer_map_shown", &t.ViewerMapShown},
		{"viewer_compare", &t.ViewerCompare}, {"viewer_right_shows", &t.ViewerRightShows},
		{"viewer_divider", &t.ViewerDivider}, {"viewer_left_side", &t.ViewerLeftSide},
		{"viewer_right_side", &t.ViewerRightSide},
	}
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
