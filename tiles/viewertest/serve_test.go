package viewertest

import (
	"bufio"
	"fmt"
	"io"
	"net"
	"net/http"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"

	"github.com/stipple-maps/stipple/geo/reftool"
)

// TestServeBindsLoopbackAndServesOnlyTheFolder runs the built stipple
// binary's serve command on the demo output: it must listen on 127.0.0.1
// only, serve the viewer, and give nothing from outside the folder.
func TestServeBindsLoopbackAndServesOnlyTheFolder(t *testing.T) {
	goTool := reftool.Need(t, "go")
	f := demoTwo(t)
	secret := filepath.Join(filepath.Dir(f.Dir), "secret.txt")
	if err := os.WriteFile(secret, []byte("not for the web"), 0o644); err != nil {
		t.Fatal(err)
	}
	bin := filepath.Join(t.TempDir(), "stipple")
	if out, err := exec.Command(goTool, "build", "-o", bin, "../../cmd/stipple").CombinedOutput(); err != nil {
		t.Fatalf("build stipple: %v\n%s", err, out)
	}
	cmd := exec.Command(bin, "serve", f.Dir, "--port", "0")
	stdout, _ := cmd.StdoutPipe()
	cmd.Stderr = os.Stderr
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	defer func() {
		cmd.Process.Signal(os.Interrupt)
		done := make(chan error, 1)
		go func() { done <- cmd.Wait() }()
		select {
		case <-done:
		case <-time.After(5 * time.Second):
			cmd.Process.Kill()
			t.Error("stipple serve did not stop on an interrupt")
		}
	}()
	lines := make(chan string, 1)
	go func() {
		s := bufio.NewScanner(stdout)
		if s.Scan() {
			lines <- s.Text()
		}
		io.Copy(io.Discard, stdout)
	}()
	var line string
	select {
	case line = <-lines:
	case <-time.After(10 * time.Second):
		t.Fatal("stipple serve printed nothing")
	}
	m := regexp.MustCompile(`at http://(127\.0\.0\.1):(\d+)/`).FindStringSubmatch(line)
	if m == nil {
		t.Fatalf("serve said %q; want an address on 127.0.0.1", line)
	}
	port := m[2]
	// The kernel's own table says which address the socket is bound to:
	// 0100007F is 127.0.0.1 in /proc/net/tcp's byte order (proc(5)).
	if tcp, err := os.ReadFile("/proc/net/tcp"); err == nil {
		var p int
		fmt.Sscan(port, &p)
		want := fmt.Sprintf("0100007F:%04X", p)
		found := false
		for _, l := range strings.Split(string(tcp), "\n") {
			fs := strings.Fields(l)
			if len(fs) > 3 && strings.HasSuffix(fs[1], fmt.Sprintf(":%04X", p)) && fs[3] == "0A" { // 0A: LISTEN
				found = true
				if fs[1] != want {
					t.Errorf("serve listens on %s; want %s", fs[1], want)
				}
			}
		}
		if !found {
			t.Errorf("no listening socket on port %s in /proc/net/tcp", port)
		}
	}
	base := "http://127.0.0.1:" + port
	resp, err := http.Get(base + "/index.html")
	if err != nil {
		t.Fatal(err)
	}
	body, _ := io.ReadAll(resp.Body)
	resp.Body.Close()
	if resp.StatusCode != 200 || !strings.Contains(string(body), "Content-Security-Policy") {
		t.Errorf("index.html: HTTP %d", resp.StatusCode)
	}
	// Raw requests, so that no client tidies the path first.
	for _, path := range []string{"/../secret.txt", "/..%2fsecret.txt", "/%2e%2e/secret.txt", "/ten/../../secret.txt", "//../secret.txt"} {
		c, err := net.Dial("tcp", "127.0.0.1:"+port)
		if err != nil {
			t.Fatal(err)
		}
		fmt.Fprintf(c, "GET %s HTTP/1.1\r\nHost: 127.0.0.1\r\nConnection: close\r\n\r\n", path)
		c.SetReadDeadline(time.Now().Add(5 * time.Second))
		out, _ := io.ReadAll(c)
		c.Close()
		if strings.Contains(string(out), "not for the web") {
			t.Errorf("GET %s served a file from outside the folder", path)
		}
	}
}
