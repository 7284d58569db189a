package render

import (
	"bytes"
	"fmt"
	"strings"
	"sync"

	"github.com/go-fonts/liberation/liberationsansbold"
	"github.com/go-fonts/liberation/liberationsansregular"
	"github.com/golang/freetype/truetype"
	"golang.org/x/image/font"
)

// Font is the typeface of a map's legend, print pages and viewer: a
// regular and a bold cut of one TrueType family. The same bytes are drawn
// into PNG legends and pages, embedded in PDFs and served to the viewer.
type Font struct {
	// Family is the family name from the font's name table ("DejaVu Sans").
	Family string
	// Regular and Bold are the font files. A family given without a bold
	// file has Bold equal to Regular (bold text is then set in the regular
	// cut on PNG and PDF; browsers embolden it).
	Regular, Bold []byte
	// BoldIsRegular says Bold is the regular file again.
	BoldIsRegular bool
	// Builtin is true for DefaultFont, which the binary carries.
	Builtin bool

	reg, bold *truetype.Font
}

// ParseFont reads a TrueType font file (.ttf, or an OpenType .otf with
// TrueType outlines) and, when bold is not nil, its bold cut. Fonts with
// PostScript (CFF) outlines are refused: the PDF writer embeds TrueType
// outlines only.
func ParseFont(regular, bold []byte) (*Font, error) {
	f := &Font{Regular: regular, Bold: bold}
	var err error
	if f.reg, err = parseTTF(regular); err != nil {
		return nil, err
	}
	if bold == nil {
		f.Bold, f.bold, f.BoldIsRegular = regular, f.reg, true
	} else if f.bold, err = parseTTF(bold); err != nil {
		return nil, fmt.Errorf("bold: %w", err)
	}
	f.Family = strings.TrimSpace(f.reg.Name(truetype.NameIDFontFamily))
	if f.Family == "" {
		return nil, fmt.Errorf("font: the font names no family (name table, name ID 1)")
	}
	return f, nil
}

func parseTTF(b []byte) (*truetype.Font, error) {
	if len(b) >= 4 && string(b[:4]) == "OTTO" {
		return nil, fmt.Errorf("font: an OpenType font with PostScript (CFF) outlines; the PDF embeds TrueType outlines only: use the family's .ttf file")
	}
	if len(b) >= 4 && (string(b[:4]) == "wOFF" || string(b[:4]) == "wOF2") {
		return nil, fmt.Errorf("font: a WOFF web font; want the family's .ttf file")
	}
	if len(b) < 4 || !(bytes.Equal(b[:4], []byte{0, 1, 0, 0}) || string(b[:4]) == "true") {
		return nil, fmt.Errorf("font: not a TrueType font file (want .ttf, or .otf with TrueType outlines)")
	}
	f, err := truetype.Parse(b)
	if err != nil {
		return nil, fmt.Errorf("font: %v", err)
	}
	return f, nil
}

var (
	defaultOnce sync.Once
	defaultFont *Font
)

// DefaultFont is Liberation Sans (regular and bold, version 2, SIL Open
// Font License 1.1), carried in the binary by github.com/go-fonts/liberation.
// Its widths match Arial's, so a reader without it sees text of the same
// length in legend.svg.
func DefaultFont() *Font {
	defaultOnce.Do(func() {
		f, err := ParseFont(liberationsansregular.TTF, liberationsansbold.TTF)
		if err != nil {
			panic("render: the built-in Liberation Sans does not parse: " + err.Error()) // a build defect, not input
		}
		f.Builtin = true
		defaultFont = f
	})
	return defaultFont
}

// orDefault is f, or DefaultFont when f is nil.
func (f *Font) orDefault() *Font {
	if f == nil {
		return DefaultFont()
	}
	return f
}

// TrueType returns the parsed regular or bold cut.
func (f *Font) TrueType(bold bool) *truetype.Font {
	f = f.orDefault()
	if bold {
		return f.bold
	}
	return f.reg
}

// Face returns a face of the font at size points for the given scale, at
// 72 dpi (one point per CSS pixel), hinted; bold picks the bold cut.
func (f *Font) Face(size, scale float64, bold bool) font.Face {
	return truetype.NewFace(f.TrueType(bold), &truetype.Options{Size: size * scale, DPI: 72, Hinting: font.HintingFull})
}

// CSSFamily is a CSS font-family list for the font: the family and, for
// the built-in face, Arial and Helvetica (the same widths), then sans-serif.
func (f *Font) CSSFamily() string {
	f = f.orDefault()
	fam := "'" + strings.NewReplacer(`\`, ``, `'`, ``, `"`, ``, `<`, ``, `>`, ``, `&`, ``, `;`, ``, `{`, ``, `}`, ``).Replace(f.Family) + "'"
	if f.Builtin {
		return fam + ", Arial, Helvetica, sans-serif"
	}
	return fam + ", sans-serif"
}
