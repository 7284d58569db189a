package batch

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"path/filepath"
	"strings"
	"sync/atomic"
	"time"

	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/mapjob"
)

// sampling is one people-per-dot value's dots: the placed store, the
// areas it holds (nil: all), and the fingerprint of the tiles drawn from
// it.
type sampling struct {
	*mapjob.Placed
	// variant names the area subset of sample = "near" ("" for all).
	variant string
	// tileFP is what the cached tiles depend on: mapjob.LookFingerprint
	// and the variant.
	tileFP  string
	elapsed time.Duration
}

// storeDir is the folder of the sampling at perDot people per dot.
func storeDir(out string, perDot float64) string {
	return filepath.Join(out, tiles.StateDir, "dots-"+strings.ReplaceAll(fmt.Sprint(perDot), ".", "_"))
}

// place returns the sampling of in at m's people per dot: mapjob.Place
// with the store kept in dir, so a rerun with the same input fingerprint
// (and the same areas, for sample = "near") reuses it. areas, when not
// nil, are the only areas placed.
func place(ctx context.Context, dir string, in *mapjob.Input, m *mapfile.Map, areas []int, hidpi bool, workers int, memory int64, placed *atomic.Int64) (*sampling, error) {
	start := time.Now()
	variant := areasVariant(areas)
	pl, err := mapjob.Place(ctx, in, m, mapjob.PlaceOptions{Workers: workers, Memory: memory, Dir: dir, Variant: variant, Areas: areas, Placed: placed})
	if err != nil {
		return nil, err
	}
	s := &sampling{Placed: pl, variant: variant, tileFP: mapjob.LookFingerprint(in, m, hidpi), elapsed: time.Since(start)}
	if variant != "" {
		h := sha256.Sum256([]byte(s.tileFP + "\n" + variant))
		s.tileFP = hex.EncodeToString(h[:])
	}
	return s, nil
}

// areasVariant names a subset of areas for mapjob.PlaceOptions.Variant:
// "" for all (nil), else a hash of the indexes.
func areasVariant(areas []int) string {
	if areas == nil {
		return ""
	}
	h := sha256.New()
	for _, i := range areas {
		fmt.Fprintf(h, "%d\n", i)
	}
	return fmt.Sprintf("near %d areas %x", len(areas), h.Sum(nil)[:8])
}
