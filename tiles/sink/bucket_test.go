//go:build stipple_cloud || stipple_s3

package sink

import (
	"bytes"
	"context"
	"fmt"
	"net/http"
	"net/http/httptest"
	"net/url"
	"path/filepath"
	"strings"
	"sync"
	"testing"

	"github.com/johannesboyne/gofakes3"
	"github.com/johannesboyne/gofakes3/backend/s3mem"
)

// bucketLocations adds an in-memory bucket and a fake S3 bucket (with and
// without a key prefix) to the round-trip test.
func bucketLocations(t *testing.T) map[string]string {
	s3url, _ := fakeS3(t, "maps")
	u, _ := url.Parse(s3url)
	u.Path = "/national/2020" // a prefix inside the bucket
	return map[string]string{"mem-url": "mem://", "s3-fake": s3url, "s3-prefix": u.String()}
}

// fakeS3 starts an in-process S3-compatible server on 127.0.0.1 with one
// bucket and returns the s3:// URL of that bucket for the blob library
// (path-style addressing, plain HTTP, fixed test credentials).
func fakeS3(t testing.TB, bucket string) (string, *s3mem.Backend) {
	u, be, _ := fakeS3Headers(t, bucket)
	return u, be
}

// putHeaders records the Cache-Control header of every PUT the fake server
// receives, by object key (the fake stores the content type but not the
// cache header, so the request itself is checked).
type putHeaders struct {
	mu    sync.Mutex
	cache map[string]string
}

func fakeS3Headers(t testing.TB, bucket string) (string, *s3mem.Backend, *putHeaders) {
	t.Helper()
	be := s3mem.New()
	if err := be.CreateBucket(bucket); err != nil {
		t.Fatal(err)
	}
	rec := &putHeaders{cache: map[string]string{}}
	h := gofakes3.New(be).Server()
	srv := httptest.NewServer(http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		if r.Method == http.MethodPut {
			rec.mu.Lock()
			rec.cache[strings.TrimPrefix(r.URL.Path, "/"+bucket+"/")] = r.Header.Get("Cache-Control")
			rec.mu.Unlock()
		}
		h.ServeHTTP(w, r)
	})) // listens on 127.0.0.1
	t.Cleanup(srv.Close)
	t.Setenv("AWS_ACCESS_KEY_ID", "test-key")
	t.Setenv("AWS_SECRET_ACCESS_KEY", "test-secret")
	t.Setenv("AWS_EC2_METADATA_DISABLED", "true")
	t.Setenv("AWS_CONFIG_FILE", filepath.Join(t.TempDir(), "none"))
	t.Setenv("AWS_SHARED_CREDENTIALS_FILE", filepath.Join(t.TempDir(), "none"))
	q := url.Values{}
	q.Set("endpoint", srv.URL)
	q.Set("region", "us-east-1")
	q.Set("use_path_style", "true")
	q.Set("disable_https", "true")
	return "s3://" + bucket + "?" + q.Encode(), be, rec
}

// TestBucketStoresContentTypeAndCacheHeader checks what the fake S3 server
// was sent: the media type and Cache-Control of each kind of file.
func TestBucketStoresContentTypeAndCacheHeader(t *testing.T) {
	ctx := context.Background()
	s3url, be, rec := fakeS3Headers(t, "tiles")
	s, err := Open(ctx, s3url)
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	for _, c := range []struct{ path, typ, cache string }{
		{"12/1205/1539.png", "image/png", "public, max-age=86400"},
		{"map.json", "application/json", "no-cache"},
		{"index.html", "text/html; charset=utf-8", "no-cache"},
		{"viewer.js", "text/javascript; charset=utf-8", "no-cache"},
		{"legend.png", "image/png", "no-cache"},
		{".stipple/tiles.json", "application/json", "private, no-store"},
	} {
		if err := PutFile(ctx, s, c.path, []byte("x")); err != nil {
			t.Fatal(err)
		}
		typ, _, err := s.(*Bucket).Attributes(ctx, c.path)
		if err != nil {
			t.Fatal(err)
		}
		if typ != c.typ {
			t.Errorf("%s: stored type %q; want %q", c.path, typ, c.typ)
		}
		rec.mu.Lock()
		cache := rec.cache[c.path]
		rec.mu.Unlock()
		if cache != c.cache {
			t.Errorf("%s: sent Cache-Control %q; want %q", c.path, cache, c.cache)
		}
		// And the server itself has it, under the same key.
		obj, err := be.HeadObject("tiles", c.path)
		if err != nil {
			t.Fatalf("server has no %s: %v", c.path, err)
		}
		if obj.Metadata["Content-Type"] != c.typ {
			t.Errorf("server: %s content type %q; want %q", c.path, obj.Metadata["Content-Type"], c.typ)
		}
	}
}

// TestCopyResumes copies a folder into a bucket, removes one object and
// copies again: only that one is sent again.
func TestCopyResumes(t *testing.T) {
	ctx := context.Background()
	src := NewDir(t.TempDir())
	for i := 0; i < 20; i++ {
		PutFile(ctx, src, fmt.Sprintf("3/%d/%d.png", i%4, i), bytes.Repeat([]byte{byte(i)}, 10+i))
	}
	PutFile(ctx, src, ".stipple/dots.bin", []byte("state"))
	s3url, _ := fakeS3(t, "pub")
	dst, err := Open(ctx, s3url)
	if err != nil {
		t.Fatal(err)
	}
	st, err := Copy(ctx, dst, src, CopyOptions{Skip: SkipState})
	if err != nil || st.Copied != 20 || st.Kept != 0 {
		t.Fatalf("first copy: %v, %v", st, err)
	}
	if _, ok, _ := dst.Exists(ctx, ".stipple/dots.bin"); ok {
		t.Error("state file was copied")
	}
	dst.Delete(ctx, "3/1/5.png")
	st, err = Copy(ctx, dst, src, CopyOptions{Skip: SkipState})
	if err != nil || st.Copied != 1 || st.Kept != 19 || st.Bytes != 15 {
		t.Fatalf("second copy: %v, %v; want 1 copied (15 bytes), 19 kept", st, err)
	}
}
