package tiles

import (
	"context"
	"fmt"
	"strings"

	"github.com/stipple-maps/stipple/render/theme"
	"github.com/stipple-maps/stipple/tiles/sink"
)

// Files of the viewer's theme.
const (
	ThemeCSS     = "theme.css"         // the map ground and the font, over viewer.css
	FontRegular  = "fonts/regular.ttf" // a theme's own font, served to the viewer
	FontBold     = "fonts/bold.ttf"    // its bold cut
	themeCSSHead = "/* stipple viewer theme: written from the map's theme. */\n"
)

// putTheme writes theme.css and, for a theme with its own font, the font
// files the viewer loads (the page's Content-Security-Policy allows fonts
// from the viewer's own origin only, font-src 'self'). The built-in font
// is not served: the viewer asks for it by name, then for Arial and
// Helvetica, which have its widths. Font files of an earlier render with
// another theme are removed.
func putTheme(ctx context.Context, out sink.Sink, t *theme.Theme) error {
	t = theme.Or(t)
	var b strings.Builder
	b.WriteString(themeCSSHead)
	fam := t.Font.CSSFamily()
	if !t.Font.Builtin {
		name := fam[:strings.Index(fam, ",")]
		fmt.Fprintf(&b, "@font-face { font-family: %s; src: url(%q) format(\"truetype\"); font-weight: 400; font-style: normal; font-display: swap; }\n", name, FontRegular)
		if !t.Font.BoldIsRegular {
			fmt.Fprintf(&b, "@font-face { font-family: %s; src: url(%q) format(\"truetype\"); font-weight: 700; font-style: normal; font-display: swap; }\n", name, FontBold)
		}
	}
	fmt.Fprintf(&b, ":root { --paper: %s; }\n", t.GroundHex())
	fmt.Fprintf(&b, "body, .st-btn, .st-right select { font-family: %s; }\n", fam)
	files := []struct {
		name string
		data []byte
	}{{FontRegular, nil}, {FontBold, nil}}
	if !t.Font.Builtin {
		files[0].data = t.Font.Regular
		if !t.Font.BoldIsRegular {
			files[1].data = t.Font.Bold
		}
	}
	for _, f := range files {
		var err error
		if f.data == nil {
			err = out.Delete(ctx, f.name)
		} else {
			err = sink.PutFile(ctx, out, f.name, f.data)
		}
		if err != nil {
			return fmt.Errorf("tiles: viewer theme: %w", err)
		}
	}
	return sink.PutFile(ctx, out, ThemeCSS, []byte(b.String()))
}
