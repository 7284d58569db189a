//go:build !(stipple_cloud || stipple_s3 || stipple_gcs || stipple_azure)

package sink

import (
	"context"
	"fmt"
	"net/url"
)

// openBucket fails in a build without object-storage drivers: they add
// 14 to 50 MB to the binary, so they come with build tags.
func openBucket(ctx context.Context, u *url.URL) (Sink, error) {
	return nil, fmt.Errorf("sink: %s: this stipple was built without object-storage drivers; build it with -tags stipple_cloud (or stipple_s3, stipple_gcs, stipple_azure)", u.Redacted())
}

// Schemes lists the bucket URL schemes this build can open: none.
func Schemes() []string { return nil }
