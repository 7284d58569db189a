//go:build stipple_cloud || stipple_s3 || stipple_gcs || stipple_azure

package sink

import (
	"context"
	"errors"
	"fmt"
	"io"
	"net/url"
	"slices"
	"strings"

	"gocloud.dev/blob"
	_ "gocloud.dev/blob/memblob" // mem:// buckets, for tests
	"gocloud.dev/gcerrors"
)

// Bucket is a sink in a bucket of the gocloud.dev/blob library. Each Put is
// one upload that becomes visible only when it completes; a cancelled or
// failed Put leaves the old object (or none).
type Bucket struct {
	b    *blob.Bucket
	name string
}

// NewBucket wraps an open bucket; name is used in messages. Close closes b.
func NewBucket(b *blob.Bucket, name string) *Bucket { return &Bucket{b: b, name: name} }

func (s *Bucket) String() string { return s.name }

// openBucket opens a bucket URL, turning its path into a key prefix.
func openBucket(ctx context.Context, u *url.URL) (Sink, error) {
	name := u.Redacted()
	prefix := ""
	if u.Scheme != "mem" {
		prefix = strings.Trim(u.Path, "/")
		u.Path = ""
		u.RawPath = ""
	}
	if !slices.Contains(blob.DefaultURLMux().BucketSchemes(), u.Scheme) {
		return nil, fmt.Errorf("sink: %s: no driver for %s:// in this build (built in: %s); build stipple with -tags stipple_cloud", name, u.Scheme, strings.Join(Schemes(), ", "))
	}
	b, err := blob.OpenBucket(ctx, u.String())
	if err != nil {
		return nil, fmt.Errorf("sink: %s: %w", name, err)
	}
	if prefix != "" {
		b = blob.PrefixedBucket(b, prefix+"/")
	}
	return NewBucket(b, name), nil
}

// Schemes lists the bucket URL schemes this build can open.
func Schemes() []string {
	s := slices.Clone(blob.DefaultURLMux().BucketSchemes())
	slices.Sort(s)
	return s
}

// Put implements Sink.
func (s *Bucket) Put(ctx context.Context, p string, data []byte, contentType, cacheControl string) error {
	if err := CheckPath(p); err != nil {
		return err
	}
	if contentType == "" {
		contentType = TypeOf(p)
	}
	err := s.b.WriteAll(ctx, p, data, &blob.WriterOptions{
		ContentType:  contentType,
		CacheControl: cacheControl,
		// One request per object: tiles are small, and a single PUT is
		// all or nothing.
		BufferSize: max(len(data)+1, 1<<20),
	})
	if err != nil {
		return fmt.Errorf("sink: %s: put %s: %w", s.name, p, err)
	}
	return nil
}

// Exists implements Sink.
func (s *Bucket) Exists(ctx context.Context, p string) (int64, bool, error) {
	if err := CheckPath(p); err != nil {
		return 0, false, err
	}
	a, err := s.b.Attributes(ctx, p)
	if err != nil {
		if gcerrors.Code(err) == gcerrors.NotFound {
			return 0, false, nil
		}
		return 0, false, fmt.Errorf("sink: %s: %s: %w", s.name, p, err)
	}
	return a.Size, true, nil
}

// Attributes returns the stored content type and cache header of path.
func (s *Bucket) Attributes(ctx context.Context, p string) (contentType, cacheControl string, err error) {
	a, err := s.b.Attributes(ctx, p)
	if err != nil {
		return "", "", fmt.Errorf("sink: %s: %s: %w", s.name, p, err)
	}
	return a.ContentType, a.CacheControl, nil
}

// Get implements Sink.
func (s *Bucket) Get(ctx context.Context, p string) ([]byte, error) {
	if err := CheckPath(p); err != nil {
		return nil, err
	}
	b, err := s.b.ReadAll(ctx, p)
	if err != nil {
		if gcerrors.Code(err) == gcerrors.NotFound {
			return nil, fmt.Errorf("sink: %s: %s: %w", s.name, p, ErrNotExist)
		}
		return nil, fmt.Errorf("sink: %s: %s: %w", s.name, p, err)
	}
	return b, nil
}

// List implements Sink.
func (s *Bucket) List(ctx context.Context, prefix string, fn func(path string, size int64) error) error {
	it := s.b.List(&blob.ListOptions{Prefix: prefix})
	for {
		o, err := it.Next(ctx)
		if errors.Is(err, io.EOF) {
			return nil
		}
		if err != nil {
			return fmt.Errorf("sink: %s: list %q: %w", s.name, prefix, err)
		}
		if o.IsDir {
			continue
		}
		if err := fn(o.Key, o.Size); err != nil {
			return err
		}
	}
}

// Delete implements Sink.
func (s *Bucket) Delete(ctx context.Context, p string) error {
	if err := CheckPath(p); err != nil {
		return err
	}
	if err := s.b.Delete(ctx, p); err != nil && gcerrors.Code(err) != gcerrors.NotFound {
		return fmt.Errorf("sink: %s: delete %s: %w", s.name, p, err)
	}
	return nil
}

// Close implements Sink.
func (s *Bucket) Close() error { return s.b.Close() }
