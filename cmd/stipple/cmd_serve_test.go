package main

import (
	"io"
	"net"
	"net/http"
	"net/http/httptest"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestServeProbes sends a table of requests, friendly and hostile, to the
// serve handler on 127.0.0.1 and checks each status exactly: files inside
// the folder are served; everything else is 404 (never 500, which would
// tell a prober that the path reached the file system and broke there).
// The probe kinds follow OWASP's Web Security Testing Guide, "Testing
// Directory Traversal File Include" (WSTG-ATHZ-01): dot-dot segments,
// encoded dots, NUL bytes, and symlinks; a file name longer than NAME_MAX
// (255 bytes on ext4) made os.Open fail with ENAMETOOLONG, which
// http.FileServer answers with 500.
func TestServeProbes(t *testing.T) {
	base := t.TempDir()
	dir := filepath.Join(base, "site")
	for _, d := range []string{".stipple", "tiles/3", "sub"} {
		if err := os.MkdirAll(filepath.Join(dir, d), 0o755); err != nil {
			t.Fatal(err)
		}
	}
	for name, body := range map[string]string{
		"index.html":            "map page",
		"sub/index.html":        "sub page",
		"tiles/3/1.png":         "tile",
		".stipple/dots.bin":     "dots",
		".hidden":               "hidden",
		"../secret.txt":         "secret",
		"../site-other/sec.txt": "secret",
	} {
		p := filepath.Join(dir, name)
		os.MkdirAll(filepath.Dir(p), 0o755)
		if err := os.WriteFile(p, []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	links := map[string]string{
		"out.txt":    filepath.Join(base, "secret.txt"), // absolute, outside
		"rel.txt":    "../secret.txt",                   // relative, outside
		"outdir":     base,                              // a folder outside
		"inside.txt": "index.html",                      // stays inside
		"dangling":   "no-such-file",
	}
	for name, to := range links {
		if err := os.Symlink(to, filepath.Join(dir, name)); err != nil {
			t.Skip("no symlinks here:", err)
		}
	}
	root, err := os.OpenRoot(dir)
	if err != nil {
		t.Fatal(err)
	}
	defer root.Close()
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	srv := httptest.NewUnstartedServer(folderHandler(root))
	srv.Listener.Close()
	srv.Listener = ln
	srv.Start()
	defer srv.Close()
	client := &http.Client{CheckRedirect: func(*http.Request, []*http.Request) error { return http.ErrUseLastResponse }}

	long := strings.Repeat("x", 300)
	for _, c := range []struct {
		method, path string
		code         int
		body         string // for 200: the whole body; for 301: the Location
	}{
		{"GET", "/", 200, "map page"},
		{"GET", "/index.html", 200, "map page"},
		{"HEAD", "/index.html", 200, ""},
		{"GET", "/tiles/3/1.png", 200, "tile"},
		{"GET", "/sub/", 200, "sub page"},
		{"GET", "/sub", 301, "/sub/"},
		{"GET", "/sub?x=1", 301, "/sub/?x=1"},
		{"GET", "/inside.txt", 200, "map page"}, // a symlink that stays inside
		{"GET", "/tiles/", 404, ""},             // no listings
		{"GET", "/tiles/3/", 404, ""},
		{"GET", "/out.txt", 404, ""},
		{"GET", "/rel.txt", 404, ""},
		{"GET", "/outdir/secret.txt", 404, ""},
		{"GET", "/outdir/", 404, ""},
		{"GET", "/dangling", 404, ""},
		{"GET", "/.stipple/dots.bin", 404, ""},
		{"GET", "/.stipple/", 404, ""},
		{"GET", "/.hidden", 404, ""},
		{"GET", "/../secret.txt", 404, ""},
		{"GET", "/%2e%2e/secret.txt", 404, ""},
		{"GET", "/tiles/%2e%2e/%2e%2e/secret.txt", 404, ""},
		{"GET", "/..%2fsecret.txt", 404, ""},
		{"GET", "/..%5csecret.txt", 404, ""},
		{"GET", "/index.html%00", 404, ""},
		{"GET", "/index.html%00.png", 404, ""},
		{"GET", "/%00", 404, ""},
		{"GET", "/" + long, 404, ""},
		{"GET", "/tiles/" + long + "/1.png", 404, ""},
		{"GET", "/" + strings.Repeat("a/", 600) + "x", 404, ""},
		{"GET", "/missing.png", 404, ""},
		{"POST", "/index.html", 405, ""},
	} {
		req, err := http.NewRequest(c.method, srv.URL+c.path, nil)
		if err != nil {
			t.Fatalf("%s: %v", c.path, err)
		}
		resp, err := client.Do(req)
		if err != nil {
			t.Fatalf("%s %s: %v", c.method, c.path, err)
		}
		b, _ := io.ReadAll(resp.Body)
		resp.Body.Close()
		if resp.StatusCode != c.code {
			t.Errorf("%s %.60s: status %d, want %d", c.method, c.path, resp.StatusCode, c.code)
		}
		switch {
		case c.code == 200 && string(b) != c.body:
			t.Errorf("%s %s: body %q, want %q", c.method, c.path, b, c.body)
		case c.code == 301 && resp.Header.Get("Location") != c.body:
			t.Errorf("%s %s: Location %q, want %q", c.method, c.path, resp.Header.Get("Location"), c.body)
		}
		for _, private := range []string{"secret", "dots", "hidden", "<a href"} {
			if c.code == 404 && strings.Contains(string(b), private) {
				t.Errorf("%s %s: body shows %q: %q", c.method, c.path, private, b)
			}
		}
	}
}
