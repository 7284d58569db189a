//go:build !(stipple_cloud || stipple_s3)

package sink

import (
	"context"
	"strings"
	"testing"
)

func bucketLocations(t *testing.T) map[string]string { return nil }

// TestBucketURLWithoutDrivers: a build without drivers says how to get them.
func TestBucketURLWithoutDrivers(t *testing.T) {
	_, err := Open(context.Background(), "s3://maps/national")
	if err == nil || !strings.Contains(err.Error(), "-tags stipple_cloud") {
		t.Fatalf("Open(s3://…) without drivers: %v; want a message naming the build tag", err)
	}
}
