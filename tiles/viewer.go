package tiles

import (
	"bytes"
	"embed"
	"encoding/json"
	"fmt"
	"html/template"
	"path/filepath"

	"github.com/stipple-maps/stipple/render"
)

//go:embed viewer/index.html viewer/viewer.js viewer/viewer.css
var viewerFiles embed.FS

// WriteViewer writes the web viewer for m into dir: index.html, viewer.js,
// viewer.css and map-data.js (the metadata as a script, so the viewer also
// works when opened from file://, where pages may not fetch files). Every
// text from the map file is escaped by html/template or encoding/json.
func WriteViewer(dir string, m *Metadata) error {
	page, err := template.ParseFS(viewerFiles, "viewer/index.html")
	if err != nil {
		return fmt.Errorf("tiles: viewer template: %w", err)
	}
	type cat struct {
		Category
		PeopleText string
	}
	data := struct {
		*Metadata
		Categories []cat
	}{Metadata: m}
	for _, c := range m.Categories {
		data.Categories = append(data.Categories, cat{c, render.FormatCount(c.People)})
	}
	var buf bytes.Buffer
	if err := page.Execute(&buf, data); err != nil {
		return fmt.Errorf("tiles: viewer: %w", err)
	}
	if err := writeFile(filepath.Join(dir, "index.html"), buf.Bytes()); err != nil {
		return err
	}
	for _, name := range []string{"viewer.js", "viewer.css"} {
		b, err := viewerFiles.ReadFile("viewer/" + name)
		if err != nil {
			return fmt.Errorf("tiles: %w", err)
		}
		if err := writeFile(filepath.Join(dir, name), b); err != nil {
			return err
		}
	}
	js, err := json.Marshal(m)
	if err != nil {
		return fmt.Errorf("tiles: %w", err)
	}
	return writeFile(filepath.Join(dir, "map-data.js"), append(append([]byte("window.stippleMap = "), js...), ";\n"...))
}
