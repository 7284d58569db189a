package tiles

import (
	"math"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/maptile"
	"github.com/stipple-maps/stipple/geo/proj"
)

// Zoom is a tile zoom level.
type Zoom = maptile.Zoom

// At returns the tile at zoom z that holds lon/lat degrees, by the formula of
// the OpenStreetMap wiki "Slippy map tilenames". Longitude 180 belongs to the
// last column (maptile.At would return 2^z, which is no tile).
func At(lon, lat float64, z Zoom) maptile.Tile {
	t := maptile.At(orb.Point{lon, lat}, z)
	n := uint32(1) << z
	if t.X >= n {
		t.X = n - 1
	}
	if t.Y >= n {
		t.Y = n - 1
	}
	return t
}

// Cover returns the tiles at zoom z that a lon/lat bound touches, row by row.
func Cover(b orb.Bound, z Zoom) []maptile.Tile {
	nw := At(b.Min[0], b.Max[1], z)
	se := At(b.Max[0], b.Min[1], z)
	var out []maptile.Tile
	for y := nw.Y; y <= se.Y; y++ {
		for x := nw.X; x <= se.X; x++ {
			out = append(out, maptile.New(x, y, z))
		}
	}
	return out
}

// MetresPerPixel is the ground resolution at a latitude for a zoom and tile
// size: cos(lat)·2π·R / (size·2^z), R = proj.WebRadius = 6378137 m
// (Microsoft, "Bing Maps Tile System").
func MetresPerPixel(lat float64, z Zoom, size int) float64 {
	return math.Cos(lat*math.Pi/180) * 2 * math.Pi * proj.WebRadius / (float64(size) * math.Exp2(float64(z)))
}
