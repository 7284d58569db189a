package main

import (
	"bytes"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/geo/demo"
	"github.com/stipple-maps/stipple/geo/reftool"
)

// `stipple print` of the demo sets its invented place names as text in
// the PDF: poppler's pdftotext reads them back. The rank-1 name always
// finds room (it is placed first); lower ranks are placed while they fit.
func TestDemoPrintLabels(t *testing.T) {
	pdftotext := reftool.Need(t, "pdftotext")
	dir := filepath.Join(t.TempDir(), "demo")
	var out, errOut bytes.Buffer
	if code := run(t.Context(), []string{"demo", dir, "--max-zoom", "11"}, &out, &errOut); code != 0 {
		t.Fatalf("demo: exit %d: %s", code, errOut.String())
	}
	pdf := filepath.Join(dir, "print-test")
	if code := run(t.Context(), []string{"print", "--dpi", "100", "--out", pdf, filepath.Join(dir, "source", "quillmere.toml")}, &out, &errOut); code != 0 {
		t.Fatalf("print: exit %d: %s", code, errOut.String())
	}
	txt, err := exec.Command(pdftotext, pdf+".pdf", "-").CombinedOutput()
	if err != nil {
		t.Fatalf("pdftotext: %v\n%s", err, txt)
	}
	lines := map[string]bool{}
	for _, l := range strings.Split(string(txt), "\n") {
		lines[strings.TrimSpace(l)] = true
	}
	found := 0
	for _, f := range demo.Places().Features {
		name := f.Props["name"].(string)
		if lines[name] {
			found++
		} else if f.Props["rank"] == int64(1) {
			t.Errorf("pdftotext finds no line %q (rank 1)", name)
		}
	}
	if n := len(demo.Places().Features); found < n/2 {
		t.Errorf("pdftotext finds %d of the %d place names; want at least half on an A4 page", found, n)
	}
}
