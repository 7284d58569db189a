// Package themetest helps tests check that an output takes every word
// from its map's theme: a marked pseudo-translation of the English text,
// the map-file table that sets it, and finders for the words of either
// in an output. Only tests import it.
package themetest

import (
	"reflect"
	"strings"
	"unicode"

	"github.com/stipple-maps/stipple/render/theme"
)

// Marked is a pseudo-translation of theme.DefaultText: each text is mark,
// a space and the English upper-cased outside its {placeholders}, so it
// keeps every placeholder and holds none of the English sentences
// (ViewerLanguage stays "en", a language tag).
func Marked(mark string) theme.Text {
	tx := theme.DefaultText
	v := reflect.ValueOf(&tx).Elem()
	for i := range v.NumField() {
		if v.Type().Field(i).Name == "ViewerLanguage" {
			continue
		}
		v.Field(i).SetString(mark + " " + upper(v.Field(i).String()))
	}
	return tx
}

// upper upper-cases s outside its {placeholders}.
func upper(s string) string {
	var b strings.Builder
	in := false
	for _, r := range s {
		switch {
		case r == '{':
			in = true
		case r == '}':
			in = false
		case !in:
			r = unicode.ToUpper(r)
		}
		b.WriteRune(r)
	}
	return b.String()
}

// TOML is tx as a map file's [theme.text] table, every key set.
func TOML(tx theme.Text) string {
	var b strings.Builder
	b.WriteString("[theme.text]\n")
	q := strings.NewReplacer(`\`, `\\`, `"`, `\"`)
	for _, k := range Keys() {
		b.WriteString(k + ` = "` + q.Replace(Get(tx, k)) + "\"\n")
	}
	return b.String()
}

// Keys lists the TOML keys of theme.Text in the order of its fields.
func Keys() []string {
	typ := reflect.TypeOf(theme.Text{})
	keys := make([]string, typ.NumField())
	for i := range keys {
		keys[i], _, _ = strings.Cut(typ.Field(i).Tag.Get("toml"), ",")
	}
	return keys
}

// Get is the text of key (its TOML name) in tx; it panics on a key
// theme.Text does not have.
func Get(tx theme.Text, key string) string {
	v := reflect.ValueOf(tx)
	for i := range v.NumField() {
		if k, _, _ := strings.Cut(v.Type().Field(i).Tag.Get("toml"), ","); k == key {
			return v.Field(i).String()
		}
	}
	panic("themetest: no text key " + key)
}

// Pieces are the literal parts of s between its placeholders, trimmed,
// the empty ones left out: "{people} people ({dots} dots) are not
// drawn." has "people (", "dots) are not drawn.".
func Pieces(s string) []string {
	var out []string
	for {
		i := strings.Index(s, "{")
		j := strings.Index(s, "}")
		if i < 0 || j < i {
			break
		}
		out = appendPiece(out, s[:i])
		s = s[j+1:]
	}
	return appendPiece(out, s)
}

func appendPiece(out []string, p string) []string {
	if p = Collapse(p); p != "" {
		out = append(out, p)
	}
	return out
}

// Collapse trims s and turns each run of white space in it into one
// space, so a sentence wrapped over lines reads as one.
func Collapse(s string) string { return strings.Join(strings.Fields(s), " ") }

// Missing lists the pieces of the texts of keys in tx that out (its white
// space collapsed) lacks, each as "key: piece".
func Missing(out string, tx theme.Text, keys ...string) []string {
	out = Collapse(out)
	var miss []string
	for _, k := range keys {
		for _, p := range Pieces(Get(tx, k)) {
			if !strings.Contains(out, p) {
				miss = append(miss, k+": "+p)
			}
		}
	}
	return miss
}

// English lists the English pieces of theme.DefaultText of two words or
// more that out (its white space collapsed) holds, each as "key: piece".
// Single words are left out: they may be in the data itself (a label, an
// area's problem as the sampler states it).
func English(out string) []string {
	out = Collapse(out)
	var found []string
	for _, k := range Keys() {
		for _, p := range Pieces(Get(theme.DefaultText, k)) {
			if strings.Contains(p, " ") && strings.ContainsFunc(p, unicode.IsLower) && strings.Contains(out, p) {
				found = append(found, k+": "+p)
			}
		}
	}
	return found
}
