package mapjob

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"sync"
	"sync/atomic"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo/proj"
	"github.com/stipple-maps/stipple/sample"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/dotstore"
	"github.com/stipple-maps/stipple/tiles/mapfile"
)

// Outcome is what became of one area's dots when something did not go
// plainly; an area with no Outcome had all its dots (Input.Dots) drawn.
type Outcome struct {
	// Lost is the number of dots per category that found no place (an
	// area with people but no polygon); nil when none were lost.
	Lost []int `json:"lost,omitempty"`
	// Beyond is the number of dots per category placed beyond Web
	// Mercator's latitude limit (proj.WebMercatorMaxLat): tiles cannot show
	// them, print pages do. nil when there are none.
	Beyond []int `json:"beyond,omitempty"`
	// Problem is one line on why dots were lost, or a note on how they
	// were placed (even-odd filling, masks ignored); "" for none.
	Problem string `json:"problem,omitempty"`
}

// Outcomes maps feature indexes to their outcomes; areas not listed had
// all their dots drawn.
type Outcomes map[int]Outcome

// outcomeOf turns the sampler's result and the count of dots beyond the
// tile latitude limit into an Outcome; ok is false when there is nothing
// to say.
func outcomeOf(r sample.Result, beyond []int) (o Outcome, ok bool) {
	for _, n := range r.Lost {
		if n > 0 {
			o.Lost = r.Lost
			break
		}
	}
	for _, n := range beyond {
		if n > 0 {
			o.Beyond = beyond
			break
		}
	}
	o.Problem = r.Problem
	return o, o.Lost != nil || o.Beyond != nil || o.Problem != ""
}

// PlaceOptions set how Place works.
type PlaceOptions struct {
	// Workers sample features in parallel; 0 means all cores.
	Workers int
	// Memory is the store's budget in bytes (see dotstore.BuilderOptions);
	// 0 means no limit. Past it, sorted runs spill into Dir (or the
	// system's temporary folder when Dir is "").
	Memory int64
	// Dir, when set, is a local folder that keeps the store (dots.bin) and
	// what placing found (dots.json): a later Place with the same input
	// fingerprint and Variant opens them instead of sampling again.
	Dir string
	// Variant names a Keep filter (e.g. a shard's layout and index), so a
	// filtered store is never taken for another; "" for the full store.
	Variant string
	// Areas, when not nil, lists the features to place; the others are
	// not sampled and have no Outcome.
	Areas []int
	// Keep, when set, picks the dots to store by key: dots for which it
	// returns false are placed (and counted) but not stored. A feature's
	// dots do not depend on which others are placed, so the store holds
	// exactly the kept dots of a full placement.
	Keep func(key uint64) bool
	// Placed, when set, counts dots as they are placed (for progress).
	Placed *atomic.Int64
}

// Placed is a map's dots in a sorted store, with what became of each
// area's dots.
type Placed struct {
	Store    *dotstore.Store
	Outcomes Outcomes
	// Sampled is the number of dots placed, stored or not.
	Sampled int64
	// Reused is set when the store came from PlaceOptions.Dir.
	Reused bool
	// Runs is the number of sorted runs spilled to disk (0: in memory).
	Runs int
}

// storeInfo is written beside the dot store (dots.json).
type storeInfo struct {
	Format      string   `json:"format"`
	Fingerprint string   `json:"fingerprint"`
	Variant     string   `json:"variant,omitempty"`
	Dots        int      `json:"dots"`
	Sampled     int64    `json:"dots_sampled"`
	Outcomes    Outcomes `json:"outcomes"`
	Placed      string   `json:"placed_by"`
	SpilledRuns int      `json:"spilled_runs"`
}

const (
	storeFile = "dots.bin"
	infoFile  = "dots.json"
)

// Place returns the map's dots: from the store in opt.Dir when it was
// placed from the same input (Input.Fingerprint) and variant, else placed
// anew under the memory budget and, with opt.Dir, kept there. The store is
// the same for any number of workers and any budget. ctx stops placing.
func Place(ctx context.Context, in *Input, m *mapfile.Map, opt PlaceOptions) (*Placed, error) {
	if opt.Dir != "" {
		if p := reuseStore(opt.Dir, in.Fingerprint, opt.Variant); p != nil {
			return p, nil
		}
		if err := os.MkdirAll(opt.Dir, 0o755); err != nil {
			return nil, fmt.Errorf("output: %w", err)
		}
		os.Remove(filepath.Join(opt.Dir, infoFile)) // the old store is gone once we start
		// Leftovers of a killed run: half-written files and unmerged runs.
		for _, pat := range []string{"*.tmp", "run-*.bin"} {
			old, _ := filepath.Glob(filepath.Join(opt.Dir, pat))
			for _, f := range old {
				os.Remove(f)
			}
		}
	}
	storePath := ""
	if opt.Dir != "" {
		storePath = filepath.Join(opt.Dir, storeFile)
	}
	p, err := placeStore(ctx, in, m, opt, storePath)
	if err != nil {
		return nil, err
	}
	if opt.Dir != "" {
		info := storeInfo{Format: sampleFormat, Fingerprint: in.Fingerprint, Variant: opt.Variant, Dots: p.Store.Len(),
			Sampled: p.Sampled, Outcomes: p.Outcomes, Placed: Version, SpilledRuns: p.Runs}
		data, err := json.Marshal(info)
		if err != nil {
			return nil, fmt.Errorf("output: %w", err)
		}
		if err := tiles.WriteFileAtomic(filepath.Join(opt.Dir, infoFile), append(data, '\n')); err != nil {
			p.Store.Close()
			return nil, err
		}
	}
	return p, nil
}

// reuseStore opens the store in dir when it was placed from fingerprint fp
// with the same variant.
func reuseStore(dir, fp, variant string) *Placed {
	data, err := os.ReadFile(filepath.Join(dir, infoFile))
	if err != nil {
		return nil
	}
	var info storeInfo
	if json.Unmarshal(data, &info) != nil || info.Format != sampleFormat || info.Fingerprint != fp || info.Variant != variant {
		return nil
	}
	s, err := dotstore.Open(filepath.Join(dir, storeFile))
	if err != nil || s.Len() != info.Dots {
		if s != nil {
			s.Close()
		}
		return nil
	}
	if info.Outcomes == nil {
		info.Outcomes = Outcomes{}
	}
	return &Placed{Store: s, Outcomes: info.Outcomes, Sampled: info.Sampled, Reused: true, Runs: info.SpilledRuns}
}

// placeStore samples the features' dots into a sorted store. Features go
// to the workers largest first, so no worker is left with a big one at
// the end.
func placeStore(ctx context.Context, in *Input, m *mapfile.Map, opt PlaceOptions, storePath string) (*Placed, error) {
	workers := opt.Workers
	if workers <= 0 {
		workers = runtime.NumCPU()
	}
	fs := in.Layer.Features
	order := opt.Areas
	if order == nil {
		order = make([]int, len(fs))
		for i := range order {
			order[i] = i
		}
	} else {
		order = slices.Clone(order)
	}
	size := func(i int) int {
		n := 0
		for _, d := range in.Dots[i] {
			n += d
		}
		return n
	}
	expected := 0
	for _, i := range order {
		expected += size(i)
	}
	slices.SortStableFunc(order, func(a, b int) int { return size(b) - size(a) })
	spill := opt.Dir
	if spill == "" {
		spill = os.TempDir()
	}
	b := dotstore.NewBuilder(dotstore.BuilderOptions{Memory: opt.Memory, SpillDir: spill, Workers: workers, Expected: min(expected, 1<<40)})
	sopt := sample.Options{PeoplePerDot: m.PeoplePerDot, Seed: m.Seed, Masks: in.Masks, Streams: Streams(m)}
	nc := len(m.Categories)
	var (
		wg       sync.WaitGroup
		mu       sync.Mutex
		failed   atomic.Pointer[error]
		sampled  atomic.Int64
		outcomes = Outcomes{}
	)
	fail := func(err error) { failed.CompareAndSwap(nil, &err) }
	next := make(chan int, 64)
	const block = 1 << 15
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			buf := make([]uint64, 0, block)
			flush := func() {
				if len(buf) == 0 {
					return
				}
				if err := b.Add(buf); err != nil {
					fail(err)
				}
				if opt.Placed != nil {
					opt.Placed.Add(int64(len(buf)))
				}
				buf = buf[:0]
			}
			for i := range next {
				if failed.Load() != nil || ctx.Err() != nil {
					continue
				}
				var beyond []int
				r := sample.FeatureNSin(&fs[i], in.Dots[i], sopt, func(cat int, p orb.Point, sinLat float64) {
					if math.Abs(p[1]) > proj.WebMercatorMaxLat {
						// Tiles end at Web Mercator's latitude limit: a dot
						// beyond it is counted, not clamped onto the edge.
						if beyond == nil {
							beyond = make([]int, nc)
						}
						beyond[cat]++
						return
					}
					// The world cell from the sine the sampler drew: no
					// arcsine rounding, no tangent (dotstore.WorldFromSin).
					x, y := dotstore.WorldFromSin(p[0], sinLat)
					k := dotstore.Key(x, y, cat)
					if opt.Keep != nil && !opt.Keep(k) {
						return
					}
					buf = append(buf, k)
					if len(buf) == block {
						flush()
					}
				})
				n := 0
				for _, d := range r.Dots {
					n += d
				}
				sampled.Add(int64(n))
				if o, ok := outcomeOf(r, beyond); ok {
					mu.Lock()
					outcomes[i] = o
					mu.Unlock()
				}
			}
			flush()
		}()
	}
	for _, i := range order {
		if ctx.Err() != nil {
			break
		}
		next <- i
	}
	close(next)
	wg.Wait()
	if p := failed.Load(); p != nil {
		return nil, *p
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	runs := b.Runs()
	s, err := b.Finish(storePath)
	if err != nil {
		return nil, err
	}
	return &Placed{Store: s, Outcomes: outcomes, Sampled: sampled.Load(), Runs: runs}, nil
}
