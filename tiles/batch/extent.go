package batch

import (
	"context"
	"encoding/json"
	"fmt"
	"image/color"
	"io/fs"
	"os"
	"path/filepath"
	"strconv"
	"time"

	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/mapjob"
	"github.com/stipple-maps/stipple/tiles/sink"
)

// Files an extent's folder holds besides the tiles and the viewer.
const (
	ThumbFile  = "thumb.png"   // 320 × 200 overview
	ExtentFile = "extent.json" // the extent's definition, rule and areas
)

// extentInfo is OUT/SLUG/extent.json: what the extent is and which areas
// its totals count.
type extentInfo struct {
	Format string     `json:"format"`
	Slug   string     `json:"slug"`
	Title  string     `json:"title"`
	Rule   string     `json:"rule"`
	Bounds [4]float64 `json:"bounds"`
	// TileBounds is the box plus margin whose tiles the folder holds.
	TileBounds [4]float64 `json:"tile_bounds"`
	Margin     float64    `json:"margin"`
	MinZoom    int        `json:"min_zoom"`
	MaxZoom    int        `json:"max_zoom"`
	AreaIDs    []string   `json:"area_ids"`
}

// finish writes one extent's folder from the cache and the sampling.
func finish(ctx context.Context, f *File, j *job, cover map[int][][2]int, in *mapjob.Input, s *sampling,
	m *mapfile.Map, cache *tileCache, colors []color.NRGBA, look func(int) render.Dot, printSlots chan struct{}, cats []string) error {
	start := time.Now()
	e := j.e
	dir := filepath.Join(f.Out, e.Slug)
	if err := os.RemoveAll(dir); err != nil {
		return fmt.Errorf("output: %w", err)
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("output: %w", err)
	}
	st := tiles.Stats{PerZoom: map[int]int64{}}
	for z := e.MinZoom; z <= e.MaxZoom; z++ {
		for _, t := range cover[z] {
			for _, sfx := range cache.suffixes() {
				src := cache.path(z, t[0], t[1], sfx)
				if _, err := os.Stat(src); err != nil {
					continue
				}
				dst := filepath.Join(dir, strconv.Itoa(z), strconv.Itoa(t[0]), strconv.Itoa(t[1])+sfx+".png")
				n, err := linkTile(src, dst)
				if err != nil {
					return err
				}
				st.Bytes += n
				if sfx == "" {
					st.Tiles++
					st.PerZoom[z]++
				} else {
					st.Tiles2x++
				}
			}
		}
	}
	if st.Tiles == 0 {
		return errEmpty
	}
	// The extent's own areas, counted as every command counts them.
	tot := mapjob.TallyAreas(in, m, s.Outcomes, j.picked.Features)
	me := *m
	me.Title = e.Title
	me.Tiles.MinZoom, me.Tiles.MaxZoom = e.MinZoom, e.MaxZoom
	sum := &mapjob.Summary{Tally: tot, Tiles: st}
	// The viewer frames the extent's box (or its areas' bound), whose
	// tiles the folder holds.
	sum.Bounds = j.picked.Bound
	md := mapjob.Metadata(&me, sum)
	if err := mapjob.PutMeasures(ctx, sink.NewDir(dir), in, m, j.picked.Features, md); err != nil {
		return err
	}
	if err := mapjob.PutFurniture(ctx, sink.NewDir(dir), md, colors); err != nil {
		return err
	}
	if err := ctx.Err(); err != nil {
		return err
	}
	if err := writeThumb(filepath.Join(dir, ThumbFile), s.Store, j.picked, in.Layer, e, colors, look, m.Tiles.Size); err != nil {
		return err
	}
	var prints []string
	if e.Print != nil {
		printSlots <- struct{}{}
		var err error
		prints, err = writePrint(ctx, dir, e, j.picked, in, s.Placed, &me)
		<-printSlots
		if err != nil {
			return fmt.Errorf("print: %w", err)
		}
	}
	tb := withMargin(j.picked.Bound, e.Margin)
	info := extentInfo{Format: "stipple-extent/1", Slug: e.Slug, Title: e.Title, Rule: j.picked.Rule,
		Bounds:     [4]float64{j.picked.Bound.Min[0], j.picked.Bound.Min[1], j.picked.Bound.Max[0], j.picked.Bound.Max[1]},
		TileBounds: [4]float64{tb.Min[0], tb.Min[1], tb.Max[0], tb.Max[1]}, Margin: e.Margin,
		MinZoom: e.MinZoom, MaxZoom: e.MaxZoom, AreaIDs: []string{}}
	for _, i := range j.picked.Features {
		info.AreaIDs = append(info.AreaIDs, in.Layer.Features[i].ID)
	}
	data, err := json.MarshalIndent(info, "", "  ")
	if err != nil {
		return fmt.Errorf("batch: %w", err)
	}
	if err := os.WriteFile(filepath.Join(dir, ExtentFile), append(data, '\n'), 0o644); err != nil {
		return fmt.Errorf("output: %w", err)
	}

	r := &j.res
	r.Status = Done
	r.People, r.Dots = map[string]float64{}, map[string]int{}
	for k, c := range cats {
		r.People[c] = tot.People[k]
		r.Dots[c] = tot.Dots[k]
	}
	r.NotDrawn = tot.NotDrawn
	if md.Measures != nil {
		r.H, r.M = md.Measures.H, md.Measures.M
		r.MostDiverse = nil
		for _, a := range md.Measures.MostDiverse {
			r.MostDiverse = append(r.MostDiverse, a.ID)
		}
	}
	r.Tiles, r.Tiles2x, r.Bytes = st.Tiles, st.Tiles2x, st.Bytes
	r.Print = prints
	r.Seconds = (time.Since(start) + j.share).Seconds()
	// The record lists every file written, so a rerun can tell the folder
	// is whole.
	rec := record{Format: extentFormat, Fingerprint: j.fp, Files: map[string]int64{}, Result: *r}
	err = filepath.WalkDir(dir, func(path string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if d.IsDir() {
			if d.Name() == tiles.StateDir {
				return filepath.SkipDir
			}
			return nil
		}
		if sink.IsTemp(d.Name()) {
			return nil // another writer's unfinished file
		}
		fi, err := d.Info()
		if err != nil {
			return err
		}
		rel, _ := filepath.Rel(dir, path)
		rec.Files[filepath.ToSlash(rel)] = fi.Size()
		return nil
	})
	if err != nil {
		return fmt.Errorf("output: %w", err)
	}
	data, err = json.Marshal(rec)
	if err != nil {
		return fmt.Errorf("batch: %w", err)
	}
	return tiles.WriteFileAtomic(filepath.Join(dir, tiles.StateDir, "extent.json"), append(data, '\n'))
}
