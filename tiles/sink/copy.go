package sink

import (
	"context"
	"fmt"
	"strings"
	"sync"
	"sync/atomic"
)

// CopyOptions set how Copy works.
type CopyOptions struct {
	// Skip, when set, leaves out the paths it returns true for.
	Skip func(path string) bool
	// Workers is the number of uploads at once; 0 means 8 (object stores
	// reward parallel requests; a folder does not mind).
	Workers int
	// Overwrite puts every file even when dst holds one of the same size
	// (for files whose content may change at the same length, or when dst
	// may hold an older render).
	Overwrite bool
}

// CopyStats count what Copy did.
type CopyStats struct {
	Copied, Kept int64
	Bytes        int64 // bytes copied
}

// Copy puts every file of src into dst under the same path (between two
// folders of one file system as hard links, atomically renamed into
// place), with the
// content type and cache header TypeOf and CacheOf give. Unless Overwrite
// is set, a path dst already holds with the same size is kept, so an
// interrupted copy resumes where it stopped: every Put is atomic, so a kept
// object is a whole one. (Whether it is the same file is the caller's to
// know: stipple marks an output with the fingerprint of the render that
// writes into it before it starts.)
func Copy(ctx context.Context, dst, src Sink, opt CopyOptions) (CopyStats, error) {
	workers := opt.Workers
	if workers <= 0 {
		workers = 8
	}
	type item struct {
		p    string
		size int64
	}
	var st CopyStats
	var firstErr error
	var mu sync.Mutex
	fail := func(err error) {
		mu.Lock()
		if firstErr == nil {
			firstErr = err
		}
		mu.Unlock()
	}
	ch := make(chan item, 4*workers)
	var wg sync.WaitGroup
	for i := 0; i < workers; i++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for it := range ch {
				if ctx.Err() != nil {
					continue
				}
				if !opt.Overwrite {
					if n, ok, err := dst.Exists(ctx, it.p); err != nil {
						fail(err)
						continue
					} else if ok && n == it.size {
						atomic.AddInt64(&st.Kept, 1)
						continue
					}
				}
				if sd, ok := src.(*Dir); ok {
					if dd, ok := dst.(*Dir); ok && dd.link(sd, it.p) == nil {
						atomic.AddInt64(&st.Copied, 1)
						atomic.AddInt64(&st.Bytes, it.size)
						continue
					}
				}
				data, err := src.Get(ctx, it.p)
				if err != nil {
					fail(err)
					continue
				}
				if err := PutFile(ctx, dst, it.p, data); err != nil {
					fail(err)
					continue
				}
				atomic.AddInt64(&st.Copied, 1)
				atomic.AddInt64(&st.Bytes, int64(len(data)))
			}
		}()
	}
	err := src.List(ctx, "", func(p string, size int64) error {
		if opt.Skip != nil && opt.Skip(p) {
			return nil
		}
		mu.Lock()
		stop := firstErr != nil
		mu.Unlock()
		if stop {
			return firstErr
		}
		select {
		case ch <- item{p, size}:
			return nil
		case <-ctx.Done():
			return ctx.Err()
		}
	})
	close(ch)
	wg.Wait()
	if firstErr != nil {
		return st, firstErr
	}
	if err != nil {
		return st, err
	}
	if err := ctx.Err(); err != nil {
		return st, err
	}
	return st, nil
}

// SkipState is a CopyOptions.Skip that leaves out stipple's own state
// folder (.stipple/) and temporary files.
func SkipState(p string) bool {
	return strings.HasPrefix(p, ".stipple/") || strings.HasSuffix(p, ".tmp")
}

// String is a one-line account of a copy, for logs.
func (s CopyStats) String() string {
	return fmt.Sprintf("%d files copied (%.1f MB), %d already there", s.Copied, float64(s.Bytes)/1e6, s.Kept)
}
