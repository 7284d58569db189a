package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"net"
	"net/http"
	"net/url"
	"os"
	"path"
	"strings"
	"time"
)

var serveDoc = register(cmdDoc{Name: "serve", Order: 50, Usage: "serve DIR [--port 8080] [--host 127.0.0.1]",
	Short: "serve a rendered folder DIR on 127.0.0.1 for a quick look",
	About: "Serves the files in the folder DIR (the out folder of a render, demo or batch) over HTTP on this " +
		"machine only, unless --host says otherwise, until Ctrl-C. Only regular files inside DIR are served: no " +
		"dot-files (so not .stipple/), no symlinks out of it, no folder listings; a folder serves its index.html.",
	Examples: []string{
		"stipple serve map-out                 # then open http://127.0.0.1:8080/",
		"stipple serve map-out --port 9000",
	}})

func cmdServe(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("serve", flag.ContinueOnError)
	fs.SetOutput(stderr)
	port := fs.Int("port", 8080, "TCP port to listen on; 0 picks a free one")
	host := fs.String("host", "127.0.0.1", "address to bind; the default keeps the map on this machine")
	pos, err := parse(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 1 {
		return usageError{"serve takes one folder"}
	}
	dir := pos[0]
	if st, err := os.Stat(dir); err != nil || !st.IsDir() {
		return fmt.Errorf("serve: %s is not a folder", dir)
	}
	ln, err := net.Listen("tcp", net.JoinHostPort(*host, fmt.Sprint(*port)))
	if err != nil {
		return fmt.Errorf("serve: %w", err)
	}
	root, err := os.OpenRoot(dir)
	if err != nil {
		return fmt.Errorf("serve: %w", err)
	}
	defer root.Close()
	srv := &http.Server{Handler: folderHandler(root), ReadHeaderTimeout: 10 * time.Second}
	fmt.Fprintf(stdout, "serving %s at http://%s/ (Ctrl-C to stop)\n", dir, ln.Addr())
	go func() { <-ctx.Done(); srv.Close() }()
	if err := srv.Serve(ln); err != nil && !errors.Is(err, http.ErrServerClosed) {
		return fmt.Errorf("serve: %w", err)
	}
	return nil
}

// Limits on request paths, checked before the file system is asked.
// 255 bytes is the longest file name on common Unix file systems (ext4,
// XFS, APFS: NAME_MAX, common practice); a rendered folder's deepest path,
// z/x/y.png at zoom 30 plus a few levels of extents, is far shorter than
// maxServedPath.
const (
	maxServedName = 255
	maxServedPath = 1024
)

// folderHandler serves the regular files inside root and nothing else.
// Every request that does not name such a file gets 404, never 500:
// paths with NUL bytes, over-long names, any part starting with a dot
// (dot-files, the dot store in .stipple/, ".."), symlinks that lead out of
// root (os.Root refuses them) and folders without an index.html. There
// are no folder listings, so nothing hidden can show up in one.
func folderHandler(root *os.Root) http.Handler {
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		if r.Method != http.MethodGet && r.Method != http.MethodHead {
			w.Header().Set("Allow", "GET, HEAD")
			http.Error(w, "method not allowed", http.StatusMethodNotAllowed)
			return
		}
		name, ok := servedName(r.URL.Path)
		if !ok {
			http.NotFound(w, r)
			return
		}
		f, st, ok := openServed(root, name)
		if ok && st.IsDir() {
			f.Close()
			if !strings.HasSuffix(r.URL.Path, "/") {
				// Relative links in the folder's index.html need the slash.
				// The target is rebuilt from the checked name, so a path
				// like //host cannot become a redirect to another site.
				to := url.URL{Path: "/" + name + "/", RawQuery: r.URL.RawQuery}
				http.Redirect(w, r, to.String(), http.StatusMovedPermanently)
				return
			}
			f, st, ok = openServed(root, path.Join(name, "index.html"))
			if ok && st.IsDir() {
				f.Close()
				ok = false
			}
		}
		if !ok {
			http.NotFound(w, r)
			return
		}
		defer f.Close()
		w.Header().Set("X-Content-Type-Options", "nosniff")
		http.ServeContent(w, r, st.Name(), st.ModTime(), f)
	})
}

// servedName turns a request path into a name inside the served folder
// ("." for the folder itself), or reports false for paths that are never
// served.
func servedName(p string) (string, bool) {
	if !strings.HasPrefix(p, "/") || len(p) > maxServedPath || strings.ContainsAny(p, "\x00\\") {
		return "", false
	}
	for _, part := range strings.Split(p[1:], "/") {
		if strings.HasPrefix(part, ".") || len(part) > maxServedName {
			return "", false
		}
	}
	name := strings.TrimPrefix(path.Clean(p), "/")
	if name == "" {
		name = "."
	}
	return name, true
}

// openServed opens name inside root when it is a folder or a regular file.
// Any error (missing, a symlink out of root, a name the system refuses) is
// a plain false: the client learns only that there is nothing to serve.
func openServed(root *os.Root, name string) (*os.File, os.FileInfo, bool) {
	f, err := root.Open(name)
	if err != nil {
		return nil, nil, false
	}
	st, err := f.Stat()
	if err != nil || !(st.IsDir() || st.Mode().IsRegular()) {
		f.Close()
		return nil, nil, false
	}
	return f, st, true
}
