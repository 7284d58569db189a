package dotstore

import (
	"math"

	"github.com/stipple-maps/stipple/geo/proj"
)

// WorldBits is the precision of a dot's world coordinates, in bits per axis.
const WorldBits = 29

// CatBits is the number of key bits that hold the category.
const CatBits = 6

// MaxCategories is the number of categories a key can tell apart.
const MaxCategories = 1 << CatBits

// WorldSize is the number of world cells along each axis.
const WorldSize = 1 << WorldBits

// Key packs world coordinates and a category into one sortable key.
func Key(x, y uint32, cat int) uint64 {
	return interleave(x, y)<<CatBits | uint64(cat)
}

// Split returns the world coordinates and category held in a key.
func Split(k uint64) (x, y uint32, cat int) {
	x, y = deinterleave(k >> CatBits)
	return x, y, int(k & (MaxCategories - 1))
}

// World converts longitude/latitude degrees to world coordinates (Web
// Mercator, OSM wiki "Slippy map tilenames" numbering scaled to 2^29 cells).
// Latitudes beyond ±proj.WebMercatorMaxLat are clamped to the edge of the
// square world.
//
// World keeps the wiki's form ln(tan φ + sec φ) of the Mercator northing
// instead of calling proj.MercatorY (ln tan(π/4 + φ/2)): the two differ by
// rounding only (TestWorldMatchesProjMercator), but a changed last bit can
// move a point into the next cell, and the cells its callers compute (shard
// layouts, extents, thumbnails) should stay those computed before. Placed
// dots are projected by WorldFromSin instead. Change it only together with a
// byte-identity check of tiles.
func World(lon, lat float64) (x, y uint32) {
	fx := (lon + 180) / 360
	phi := lat * math.Pi / 180
	fy := (1 - math.Log(math.Tan(phi)+1/math.Cos(phi))/math.Pi) / 2
	return cell(fx), cell(fy)
}

// WorldFromSin is World for a point given by its longitude (degrees) and
// the sine of its latitude, s = sin φ: Web Mercator's northing
// ln(tan φ + sec φ) is atanh(s) (proj.MercatorYSin), one logarithm and no
// arcsine, tangent or cosine. The sampler draws dots in the plane
// (longitude, sin φ) and hands placing the s it drew (sample.FeatureNSin),
// so every placed dot's cell comes from here. The cell is World(lon,
// asin(s))'s but for points within a few millionths of a cell of a cell
// edge, which may land in the neighbouring cell (TestWorldFromSinMatchesWorld);
// of the two, this one is the closer to exact (TestWorldFromSinAgainstExact).
// |s| at or beyond sin(proj.WebMercatorMaxLat) clamps to the edge of the
// square world, like World.
func WorldFromSin(lon, s float64) (x, y uint32) {
	fx := (lon + 180) / 360
	fy := (1 - proj.MercatorYSin(s)/math.Pi) / 2
	return cell(fx), cell(fy)
}

func cell(f float64) uint32 {
	if !(f > 0) { // also catches NaN
		return 0
	}
	v := f * WorldSize
	if v >= WorldSize-1 {
		return WorldSize - 1
	}
	return uint32(v)
}

// TileRange returns the first and last key (both inclusive) that tile
// (z, x, y) can hold.
func TileRange(z, x, y int) (first, last uint64) {
	shift := uint(2*(WorldBits-z) + CatBits)
	m := interleave(uint32(x), uint32(y))
	first = m << shift
	return first, first | (1<<shift - 1)
}

// spread inserts a zero bit above each of the low 32 bits of v.
func spread(v uint32) uint64 {
	x := uint64(v)
	x = (x | x<<16) & 0x0000FFFF0000FFFF
	x = (x | x<<8) & 0x00FF00FF00FF00FF
	x = (x | x<<4) & 0x0F0F0F0F0F0F0F0F
	x = (x | x<<2) & 0x3333333333333333
	x = (x | x<<1) & 0x5555555555555555
	return x
}

func compact(x uint64) uint32 {
	x &= 0x5555555555555555
	x = (x | x>>1) & 0x3333333333333333
	x = (x | x>>2) & 0x0F0F0F0F0F0F0F0F
	x = (x | x>>4) & 0x00FF00FF00FF00FF
	x = (x | x>>8) & 0x0000FFFF0000FFFF
	x = (x | x>>16) & 0x00000000FFFFFFFF
	return uint32(x)
}

// interleave puts y's bits in the odd positions and x's in the even ones, so
// that tile rows and columns nest the way XYZ tiles do.
func interleave(x, y uint32) uint64 { return spread(y)<<1 | spread(x) }

func deinterleave(m uint64) (x, y uint32) { return compact(m), compact(m >> 1) }

// CellLonLat returns the longitude/latitude of the centre of world cell
// (x, y): the inverse of World, exact to half a cell (about 4 cm at the
// equator).
func CellLonLat(x, y uint32) (lon, lat float64) {
	fx := (float64(x) + 0.5) / WorldSize
	fy := (float64(y) + 0.5) / WorldSize
	lon = fx*360 - 180
	lat = proj.MercatorPhi(math.Pi*(1-2*fy)) * 180 / math.Pi
	return lon, lat
}
