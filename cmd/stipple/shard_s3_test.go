//go:build stipple_cloud || stipple_s3

package main

import (
	"bytes"
	"context"
	"net/http/httptest"
	"net/url"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"github.com/johannesboyne/gofakes3"
	"github.com/johannesboyne/gofakes3/backend/s3mem"
	"github.com/stipple-maps/stipple/tiles/mapjob"
	"github.com/stipple-maps/stipple/tiles/sink"
)

// TestRenderToFakeS3 renders the demo city (zooms 9–13) into a bucket of
// an in-process S3-compatible server on 127.0.0.1, as a one-part sharded
// render plus the final step (tiles Put straight into the bucket), and
// reads every object back: the bytes must
// equal a local render's files, tiles must be stored as image/png. A second
// run finds the part complete and sends no tile again.
func TestRenderToFakeS3(t *testing.T) {
	ctx := context.Background()
	be := s3mem.New()
	if err := be.CreateBucket("maps"); err != nil {
		t.Fatal(err)
	}
	srv := httptest.NewServer(gofakes3.New(be).Server())
	defer srv.Close()
	t.Setenv("AWS_ACCESS_KEY_ID", "test-key")
	t.Setenv("AWS_SECRET_ACCESS_KEY", "test-secret")
	t.Setenv("AWS_EC2_METADATA_DISABLED", "true")
	t.Setenv("AWS_CONFIG_FILE", filepath.Join(t.TempDir(), "none"))
	t.Setenv("AWS_SHARED_CREDENTIALS_FILE", filepath.Join(t.TempDir(), "none"))
	q := url.Values{"endpoint": {srv.URL}, "region": {"us-east-1"}, "use_path_style": {"true"}, "disable_https": {"true"}}
	bucket := "s3://maps/demo/v1?" + q.Encode()

	root := t.TempDir()
	m, err := writeDemoSource(filepath.Join(root, "demo"))
	if err != nil {
		t.Fatal(err)
	}
	m.Tiles.MaxZoom = 13
	local := filepath.Join(root, "local")
	bin := buildStipple(t)
	runOK(t, exec.Command(bin, "render", m.Path, "--out", local, "--max-zoom", "13"))

	m.Out = bucket
	var log bytes.Buffer
	opt := mapjob.Options{Workers: 2, Work: filepath.Join(root, "work"), Log: &log}
	for _, spec := range []shardSpec{{Index: 0, Count: 1}, {Count: 1, Final: true}} {
		if err := renderShard(ctx, m, spec, opt, nil, &log); err != nil {
			t.Fatalf("%s: %v\n%s", spec, err, log.String())
		}
	}
	want := publicFiles(t, local)
	s, err := sink.Open(ctx, bucket)
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	got := map[string]bool{}
	err = s.List(ctx, "", func(p string, size int64) error {
		if strings.HasPrefix(p, ".stipple/") {
			return nil
		}
		got[p] = true
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != len(want) {
		t.Errorf("bucket holds %d files; the local render %d", len(got), len(want))
	}
	tilesN := 0
	for p, b := range want {
		data, err := s.Get(ctx, p)
		if err != nil {
			t.Fatalf("%s: %v", p, err)
		}
		if !bytes.Equal(data, b) {
			t.Errorf("%s: bucket copy differs from the local file", p)
		}
		if strings.HasSuffix(p, ".png") {
			// The server's own record, under the bucket's prefix.
			obj, err := be.HeadObject("maps", "demo/v1/"+p)
			if err != nil {
				t.Fatalf("server has no %s: %v", p, err)
			}
			if ct := obj.Metadata["Content-Type"]; ct != "image/png" {
				t.Errorf("%s stored as %q; want image/png", p, ct)
			}
			tilesN++
		}
	}
	if tilesN < 50 {
		t.Fatalf("only %d PNG files compared", tilesN)
	}
	// Rerun: the part's report is there, so nothing is drawn or sent.
	log.Reset()
	if err := renderShard(ctx, m, shardSpec{Index: 0, Count: 1}, opt, nil, &log); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(log.String(), "already complete") {
		t.Errorf("rerun did not find the part complete:\n%s", log.String())
	}
	t.Logf("%d files read back identical from the fake S3 bucket, %d of them PNG", len(want), tilesN)
}
