package tiles

import (
	"bytes"
	"context"
	"encoding/json"
	"hash/crc32"
	"image"
	"image/color"
	"image/png"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/tiles/dotstore"
	"github.com/stipple-maps/stipple/tiles/sink"
)

var testColors = []color.NRGBA{{230, 159, 0, 255}, {86, 180, 233, 255}, {0, 158, 115, 255}}

func sorted(keys []uint64) *dotstore.Store {
	k := slices.Clone(keys)
	slices.Sort(k)
	return dotstore.FromSorted(k)
}

func readPNG(t *testing.T, path string) *image.NRGBA {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	img, err := png.Decode(f)
	if err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	b := img.Bounds()
	out := image.NewNRGBA(b)
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			c := color.NRGBAModel.Convert(img.At(x, y)).(color.NRGBA)
			if c.A == 0 {
				c = color.NRGBA{}
			}
			out.SetNRGBA(x, y, c)
		}
	}
	return out
}

// worldAt returns the world cell whose centre is at pixel (px, py) + the
// given sub-pixel offset of the 256-px tile grid at zoom z (OSM "Slippy map
// tilenames" pixel numbering: 256·2^z pixels across the world).
func worldAt(z int, px, py float64) (uint32, uint32) {
	s := float64(dotstore.WorldSize) / (256 * math.Exp2(float64(z)))
	return uint32(px * s), uint32(py * s)
}

// TestSeamPixelsMatchOneBigCanvas puts dots across the edges and corner of
// four tiles and checks every pixel of each tile against one 512×512 canvas
// that holds all four: a dot across an edge must have the same pixels on
// both sides, as if the tiles were never cut.
func TestSeamPixelsMatchOneBigCanvas(t *testing.T) {
	const z, tx, ty = 10, 300, 400 // the 2×2 block of tiles (300..301, 400..401)
	rng := rand.New(rand.NewPCG(21, 1))
	var keys []uint64
	for i := 0; i < 400; i++ {
		// Near the vertical and horizontal seams at pixel 256 of the block.
		px := 256 + (rng.Float64()*2-1)*4
		py := rng.Float64() * 512
		if i%2 == 1 {
			px, py = py, px
		}
		wx, wy := worldAt(z, float64(tx*256)+px, float64(ty*256)+py)
		keys = append(keys, dotstore.Key(wx, wy, rng.IntN(3)))
	}
	look := render.Dot{Diameter: 3.4, Opacity: 0.8}
	dir := t.TempDir()
	_, err := Write(context.Background(), sorted(keys), Options{Dir: dir, MinZoom: z, MaxZoom: z, TileSize: 256,
		Colors: testColors, Look: func(int) render.Dot { return look }, Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	big := render.NewCanvas(512, 512, 3)
	st := render.NewStamp(look)
	for _, k := range keys {
		wx, wy, cat := dotstore.Split(k)
		big.AddStamp(cat, subPixel(wx, z, 8)-tx*256*render.Sub, subPixel(wy, z, 8)-ty*256*render.Sub, st)
	}
	want := image.NewNRGBA(image.Rect(0, 0, 512, 512))
	big.Composite(testColors, want)
	inked := 0
	for q := 0; q < 4; q++ {
		qx, qy := q&1, q>>1
		got := readPNG(t, filepath.Join(dir, "10", itoa(tx+qx), itoa(ty+qy)+".png"))
		for y := 0; y < 256; y++ {
			for x := 0; x < 256; x++ {
				w := want.NRGBAAt(qx*256+x, qy*256+y)
				if g := got.NRGBAAt(x, y); g != w {
					t.Fatalf("tile %d/%d pixel (%d,%d) = %v; the uncut canvas has %v", tx+qx, ty+qy, x, y, g, w)
				}
				if w.A > 0 && (x < 4 || x > 251 || y < 4 || y > 251) {
					inked++
				}
			}
		}
	}
	if inked < 1000 {
		t.Fatalf("only %d inked pixels along the seams; the test dots missed them", inked)
	}
}

// TestSeamAcrossTheAntimeridian: dots at the world's east edge ink the
// first column of the westernmost tile as if the two tiles were side by
// side: both match one 512-px canvas holding the east tile then the west.
func TestSeamAcrossTheAntimeridian(t *testing.T) {
	const z = 3
	n := 1 << z
	var keys []uint64
	for i, px := range []float64{-0.5, -1.7, 0.3} { // pixels from the seam, east of it negative
		p := float64(n*256) + px
		if px > 0 {
			p = px
		}
		wx, wy := worldAt(z, p, 300.5+10*float64(i))
		keys = append(keys, dotstore.Key(wx, wy, i))
	}
	look := render.Dot{Diameter: 4, Opacity: 1}
	dir := t.TempDir()
	if _, err := Write(context.Background(), sorted(keys), Options{Dir: dir, MinZoom: z, MaxZoom: z, TileSize: 256,
		Colors: testColors, Look: func(int) render.Dot { return look }, Workers: 1}); err != nil {
		t.Fatal(err)
	}
	big := render.NewCanvas(512, 256, 3)
	st := render.NewStamp(look)
	for _, k := range keys {
		wx, wy, cat := dotstore.Split(k)
		x := subPixel(wx, z, 8) - (n-1)*256*render.Sub
		if x > 512*render.Sub { // a dot of the west tile, seen from the east
			x -= n * 256 * render.Sub
		}
		if x < 0 {
			x += n * 256 * render.Sub
		}
		big.AddStamp(cat, x, subPixel(wy, z, 8)-256*render.Sub, st)
	}
	want := image.NewNRGBA(image.Rect(0, 0, 512, 256))
	big.Composite(testColors, want)
	east := readPNG(t, filepath.Join(dir, "3", itoa(n-1), "1.png"))
	west := readPNG(t, filepath.Join(dir, "3", "0", "1.png"))
	inked := 0
	for y := 0; y < 256; y++ {
		for x := 0; x < 256; x++ {
			if g, w := east.NRGBAAt(x, y), want.NRGBAAt(x, y); g != w {
				t.Fatalf("east tile (%d,%d) = %v; want %v", x, y, g, w)
			}
			if g, w := west.NRGBAAt(x, y), want.NRGBAAt(256+x, y); g != w {
				t.Fatalf("west tile (%d,%d) = %v; want %v", x, y, g, w)
			}
			if want.NRGBAAt(255, y).A > 0 && want.NRGBAAt(256, y).A > 0 {
				inked++
			}
		}
	}
	if inked == 0 {
		t.Fatal("no dot inked both sides of the seam")
	}
}

// TestCountZoomsMatchReference checks a zoom where dots are narrower than
// a pixel against counts made directly from the dots' pixel numbers.
func TestCountZoomsMatchReference(t *testing.T) {
	const z = 6
	rng := rand.New(rand.NewPCG(5, 5))
	var keys []uint64
	counts := map[[3]int]int{} // tile-local pixel and category
	for i := 0; i < 5000; i++ {
		px, py := 2048+rng.Float64()*300, 1500+rng.Float64()*200
		wx, wy := worldAt(z, px, py)
		cat := rng.IntN(3)
		keys = append(keys, dotstore.Key(wx, wy, cat))
		// Pixel of the world cell, by the slippy-map scale.
		gx := int(float64(wx) * 256 * math.Exp2(z) / dotstore.WorldSize)
		gy := int(float64(wy) * 256 * math.Exp2(z) / dotstore.WorldSize)
		counts[[3]int{gx, gy, cat}]++
	}
	look := render.Dot{Diameter: 0.5, Opacity: 0.6}
	dir := t.TempDir()
	if _, err := Write(context.Background(), sorted(keys), Options{Dir: dir, MinZoom: z, MaxZoom: z, TileSize: 256,
		Colors: testColors, Look: func(int) render.Dot { return look }, Workers: 2}); err != nil {
		t.Fatal(err)
	}
	for _, tile := range [][2]int{{8, 5}, {9, 5}, {8, 6}, {9, 6}} {
		ref := render.NewCanvas(256, 256, 3)
		for k, v := range counts {
			if k[0]/256 == tile[0] && k[1]/256 == tile[1] {
				for i := 0; i < v; i++ {
					ref.Count(k[2], k[0]%256, k[1]%256)
				}
			}
		}
		path := filepath.Join(dir, "6", itoa(tile[0]), itoa(tile[1])+".png")
		if ref.Empty() {
			if _, err := os.Stat(path); err == nil {
				t.Errorf("tile %v has no dots but was written", tile)
			}
			continue
		}
		want := image.NewNRGBA(image.Rect(0, 0, 256, 256))
		ref.CompositeCounts(testColors, look.Mass(), want)
		got := readPNG(t, path)
		if !slices.Equal(got.Pix, want.Pix) {
			t.Errorf("tile %v differs from the reference counts", tile)
		}
	}
}

// TestCategoryOrderGivesIdenticalTiles renumbers the categories of the same
// dots (and permutes the colours to match): every tile file must be byte
// for byte the same.
func TestCategoryOrderGivesIdenticalTiles(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 9))
	var a, b []uint64
	perm := []int{2, 0, 1}
	permColors := make([]color.NRGBA, 3)
	for k, p := range perm {
		permColors[p] = testColors[k]
	}
	for i := 0; i < 20000; i++ {
		wx, wy := worldAt(9, 70000+rng.Float64()*900, 50000+rng.Float64()*700)
		cat := rng.IntN(3)
		a = append(a, dotstore.Key(wx, wy, cat))
		b = append(b, dotstore.Key(wx, wy, perm[cat]))
	}
	look := func(z int) render.Dot {
		return render.Dot{Diameter: 3 * math.Pow(math.Sqrt2, float64(z-12)), Opacity: 0.9}
	}
	da, db := t.TempDir(), t.TempDir()
	for _, r := range []struct {
		dir    string
		keys   []uint64
		colors []color.NRGBA
	}{{da, a, testColors}, {db, b, permColors}} {
		if _, err := Write(context.Background(), sorted(r.keys), Options{Dir: r.dir, MinZoom: 5, MaxZoom: 12, TileSize: 256,
			Colors: r.colors, Look: look, Workers: 2}); err != nil {
			t.Fatal(err)
		}
	}
	n := compareTrees(t, da, db)
	if n < 20 {
		t.Fatalf("only %d tiles compared", n)
	}
}

// compareTrees checks that two pyramids hold the same tile files with the
// same bytes, and returns how many there are.
func compareTrees(t *testing.T, a, b string) int {
	t.Helper()
	list := func(root string) map[string][]byte {
		out := map[string][]byte{}
		filepath.WalkDir(root, func(p string, d os.DirEntry, err error) error {
			if err == nil && !d.IsDir() && strings.HasSuffix(p, ".png") {
				rel, _ := filepath.Rel(root, p)
				out[rel], _ = os.ReadFile(p)
			}
			return nil
		})
		return out
	}
	la, lb := list(a), list(b)
	if len(la) != len(lb) {
		t.Fatalf("%d tiles vs %d", len(la), len(lb))
	}
	for k, v := range la {
		if !bytes.Equal(v, lb[k]) {
			t.Fatalf("tile %s differs", k)
		}
	}
	return len(la)
}

// TestInterruptedWriteResumesToIdenticalTiles cancels a write part-way
// (after a few tiles, and again later), reruns it with the same
// fingerprint, and compares with an uninterrupted write: same files, same
// bytes, same totals; and a new fingerprint clears the old tiles.
func TestInterruptedWriteResumesToIdenticalTiles(t *testing.T) {
	src := clusterKeys(13, 13, 30000, 600, 500)
	look := growingLook(11)
	opt := Options{MinZoom: 3, MaxZoom: 11, TileSize: 256, Colors: testColors, Look: look, Workers: 2, Fingerprint: "look-1", HiDPI: true}
	ref := t.TempDir()
	o := opt
	o.Dir = ref
	want, err := Write(context.Background(), src, o)
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	o.Dir = dir
	for _, stopAfter := range []int64{5, 60, 200} {
		ctx, cancel := context.WithCancel(context.Background())
		o.Progress = func(s Stats) {
			if s.Tiles+s.Tiles2x+s.Empty >= stopAfter {
				cancel()
			}
		}
		if _, err := Write(ctx, src, o); err == nil {
			t.Fatalf("write stopped after %d tiles reported no error", stopAfter)
		}
		cancel()
	}
	o.Progress = nil
	got, err := Write(context.Background(), src, o)
	if err != nil {
		t.Fatal(err)
	}
	if got.Kept == 0 {
		t.Error("the resumed run kept no tiles")
	}
	if got.Tiles != want.Tiles || got.Tiles2x != want.Tiles2x || got.Bytes != want.Bytes || !mapsEqual(got.PerZoom, want.PerZoom) {
		t.Errorf("resumed totals %+v; uninterrupted %+v", got, want)
	}
	if n := compareTrees(t, ref, dir); int64(n) != want.Tiles+want.Tiles2x {
		t.Errorf("%d files; stats say %d", n, want.Tiles+want.Tiles2x)
	}
	if tmp, _ := os.ReadDir(filepath.Join(dir, StateDir, "tmp")); len(tmp) != 0 {
		t.Errorf("temporary files left: %d", len(tmp))
	}
	// A new look: old tiles are removed, not mixed in.
	o.Fingerprint = "look-2"
	o.MaxZoom = 6
	if _, err := Write(context.Background(), src, o); err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(filepath.Join(dir, "11")); !os.IsNotExist(err) {
		t.Error("zoom 11 of the old look survived a new fingerprint")
	}
}

// TestResumeRewritesPartWrittenTiles: tiles are written in place, so a
// run killed mid-write can leave part of a tile (cut anywhere, or empty).
// A resumed run must write those again and keep only whole ones: cut
// tiles of a zoom the manifest does not list as done, rerun, and compare
// with the uninterrupted output. Every tile ends with the IEND chunk
// (W3C PNG specification, second edition, 11.2.5), whose CRC-32 is
// computed here, not copied.
func TestResumeRewritesPartWrittenTiles(t *testing.T) {
	if got := crc32.ChecksumIEEE([]byte("IEND")); !bytes.Equal(pngEnd[8:], []byte{byte(got >> 24), byte(got >> 16), byte(got >> 8), byte(got)}) {
		t.Fatalf("pngEnd CRC %x; the IEND chunk's CRC-32 is %08x", pngEnd[8:], got)
	}
	src := clusterKeys(31, 7, 20000, 600, 500)
	look := growingLook(11)
	opt := Options{MinZoom: 9, MaxZoom: 11, TileSize: 256, Colors: testColors, Look: look, Workers: 2, Fingerprint: "look-1"}
	ref, dir := t.TempDir(), t.TempDir()
	for _, d := range []string{ref, dir} {
		o := opt
		o.Dir = d
		if _, err := Write(context.Background(), src, o); err != nil {
			t.Fatal(err)
		}
	}
	// Zoom 11 as a killed run may leave it: not done, one tile cut in the
	// middle, one cut just before its last byte, one empty.
	files, _ := filepath.Glob(filepath.Join(dir, "11", "*", "*.png"))
	if len(files) < 3 {
		t.Fatalf("%d tiles at zoom 11; the test needs 3", len(files))
	}
	for i, f := range files[:3] {
		b, _ := os.ReadFile(f)
		if !bytes.HasSuffix(b, pngEnd) {
			t.Fatalf("%s does not end with IEND", f)
		}
		cut := []int{len(b) / 2, len(b) - 1, 0}[i]
		if err := os.WriteFile(f, b[:cut], 0o644); err != nil {
			t.Fatal(err)
		}
	}
	var man manifest
	data, _ := os.ReadFile(manifestPath(dir))
	if err := json.Unmarshal(data, &man); err != nil {
		t.Fatal(err)
	}
	delete(man.Done, "11")
	if err := man.save(dir); err != nil {
		t.Fatal(err)
	}
	// A kill while the manifest was being saved leaves its temporary file
	// (named as WriteFileAtomic names it, for a process that is gone).
	stale := filepath.Join(dir, StateDir, sink.TempToken("gone-host", 4242)+"7."+manifestName)
	if err := os.WriteFile(stale, data[:len(data)/2], 0o644); err != nil {
		t.Fatal(err)
	}
	o := opt
	o.Dir = dir
	st, err := Write(context.Background(), src, o)
	if err != nil {
		t.Fatal(err)
	}
	if st.Kept == 0 {
		t.Error("the resumed run kept no tiles")
	}
	if _, err := os.Stat(stale); !os.IsNotExist(err) {
		t.Errorf("the resumed run left the killed run's %s (%v)", filepath.Base(stale), err)
	}
	compareTrees(t, ref, dir)
}

// clusterKeys is n dots of 3 categories uniform over a w × h patch of
// zoom-8 pixels at (30000, 20000), from PCG seeds a, b.
func clusterKeys(a, b uint64, n int, w, h float64) *dotstore.Store {
	rng := rand.New(rand.NewPCG(a, b))
	keys := make([]uint64, 0, n)
	for i := 0; i < n; i++ {
		wx, wy := worldAt(8, 30000+rng.Float64()*w, 20000+rng.Float64()*h)
		keys = append(keys, dotstore.Key(wx, wy, rng.IntN(3)))
	}
	return sorted(keys)
}

// growingLook is 2.5 px dots at zoom top, √2 times wider a zoom in,
// opacity 0.9.
func growingLook(top int) func(z int) render.Dot {
	return func(z int) render.Dot {
		return render.Dot{Diameter: 2.5 * math.Pow(math.Sqrt2, float64(z-top)), Opacity: 0.9}
	}
}

func mapsEqual(a, b map[int]int64) bool {
	if len(a) != len(b) {
		return false
	}
	for k, v := range a {
		if b[k] != v {
			return false
		}
	}
	return true
}

func itoa(i int) string { return strconv.Itoa(i) }

// TestCandidatesAreOccupiedTilesAndTheirNeighbours compares the streamed
// candidates with a plain set: every tile holding dots and its eight
// neighbours (wrapping east–west, not north–south), each listed once.
func TestCandidatesAreOccupiedTilesAndTheirNeighbours(t *testing.T) {
	rng := rand.New(rand.NewPCG(17, 17))
	var keys []uint64
	for i := 0; i < 3000; i++ {
		wx, wy := uint32(rng.IntN(dotstore.WorldSize)), uint32(rng.IntN(dotstore.WorldSize/64))
		if i%3 == 0 {
			wx = uint32(dotstore.WorldSize - 1 - rng.IntN(1000)) // by the antimeridian
		}
		keys = append(keys, dotstore.Key(wx, wy, 0))
	}
	src := sorted(keys)
	for _, z := range []int{0, 1, 2, 5, 9} {
		n := 1 << z
		want := map[[2]int]bool{}
		for _, k := range src.Keys() {
			x, y, _ := dotstore.Split(k)
			tx, ty := int(x>>(dotstore.WorldBits-z)), int(y>>(dotstore.WorldBits-z))
			for dy := -1; dy <= 1; dy++ {
				for dx := -1; dx <= 1; dx++ {
					if ty+dy >= 0 && ty+dy < n {
						want[[2]int{(tx + dx + n) % n, ty + dy}] = true
					}
				}
			}
		}
		got := Candidates(src, z)
		seen := map[[2]int]bool{}
		for _, c := range got {
			if seen[c] {
				t.Fatalf("z%d: %v listed twice", z, c)
			}
			seen[c] = true
			if !want[c] {
				t.Fatalf("z%d: %v is no candidate", z, c)
			}
		}
		if len(seen) != len(want) {
			t.Errorf("z%d: %d candidates; want %d", z, len(seen), len(want))
		}
	}
}
