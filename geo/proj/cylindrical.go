package proj

import "math"

// WebRadius is the sphere radius of Web Mercator and of PlateCarree: the
// WGS 84 semi-major axis (IOGP GN7-2, method 1024).
const WebRadius = 6378137.0

// WebMercatorMaxLat is the latitude at which Web Mercator's square world
// ends, atan(sinh π) in degrees; Forward clamps latitudes to ±this. It is
// the one definition of that limit: tiles and the dot store use it too.
const WebMercatorMaxLat = 85.0511287798066

// MercatorY is the northing of latitude phi (radians) on the unit sphere,
// ln tan(π/4 + φ/2) (IOGP GN7-2 method 1024 with R = 1, FN = 0); multiply
// by WebRadius for EPSG:3857 metres. It does not clamp: ±π/2 give ±Inf.
// This is the one forward formula of Web Mercator in the project (the dot
// store's World keeps its own form; its doc comment says why).
func MercatorY(phi float64) float64 { return math.Log(math.Tan(math.Pi/4 + phi/2)) }

// MercatorPhi is the inverse of MercatorY: the latitude in radians of the
// unit-sphere northing y, φ = π/2 − 2 atan(e^(−y)) (IOGP GN7-2 method 1024,
// reverse).
func MercatorPhi(y float64) float64 { return math.Pi/2 - 2*math.Atan(math.Exp(-y)) }

// MercatorYSin is MercatorY computed from s = sin φ instead of φ:
// atanh(s) = ½ ln((1+s)/(1−s)), since tan(π/4 + φ/2) = √((1+s)/(1−s)).
// It needs no tangent, so a caller that already holds sin φ (the sampler's
// equal-area plane) saves the trigonometry. s = ±1 gives ±Inf.
//
// It is written as ½ ln((1+s)/(1−s)) rather than math.Atanh because that is
// the form tiles' outline drawing has always used (as does orb's
// maptile.Fraction): keeping it keeps outline tiles byte-identical. The two
// differ by rounding only (TestMercatorYSinMatchesTanForm).
func MercatorYSin(s float64) float64 { return 0.5 * math.Log((1+s)/(1-s)) }

// WebMercator is the Popular Visualisation Pseudo Mercator of EPSG:3857
// (IOGP GN7-2 method 1024): the spherical Mercator formulas with
// R = 6378137 m applied to WGS 84 longitude and latitude,
//
//	E = FE + R(λ − λ0),  N = FN + R ln tan(π/4 + φ/2).
//
// The zero value is EPSG:3857 itself. Forward clamps latitude to
// ±WebMercatorMaxLat, the edge of the square tile world.
type WebMercator struct {
	Lon0          float64 // central meridian, degrees (0 for EPSG:3857)
	FalseEasting  float64 // metres
	FalseNorthing float64 // metres
}

// Forward projects lon, lat in degrees to metres.
func (p WebMercator) Forward(lon, lat float64) (x, y float64) {
	if !(lat >= -90 && lat <= 90) || math.IsNaN(lon) || math.IsInf(lon, 0) {
		return math.NaN(), math.NaN()
	}
	lat = math.Max(-WebMercatorMaxLat, math.Min(WebMercatorMaxLat, lat))
	l := wrapRad((lon - p.Lon0) * deg)
	return p.FalseEasting + WebRadius*l,
		p.FalseNorthing + WebRadius*MercatorY(lat*deg)
}

// Inverse maps metres back to lon, lat in degrees.
func (p WebMercator) Inverse(x, y float64) (lon, lat float64) {
	if math.IsNaN(x) || math.IsNaN(y) || math.IsInf(x, 0) {
		return math.NaN(), math.NaN()
	}
	lat = MercatorPhi((y-p.FalseNorthing)/WebRadius) / deg
	lon = wrapDeg(p.Lon0 + (x-p.FalseEasting)/WebRadius/deg)
	return lon, lat
}

// String returns the PROJ description.
func (p WebMercator) String() string {
	s := "+proj=webmerc +datum=WGS84"
	if p.Lon0 != 0 {
		s += " +lon_0=" + num(p.Lon0)
	}
	if p.FalseEasting != 0 || p.FalseNorthing != 0 {
		s += " " + falseOrigin(p.FalseEasting, p.FalseNorthing)
	}
	return s
}

// Ellipsoid returns WGS 84: the formulas use a sphere, but the longitudes
// and latitudes they take are WGS 84 ones, so ground distances (ScaleAt)
// are measured on WGS 84.
func (WebMercator) Ellipsoid() Ellipsoid { return WGS84 }

// PlateCarree is the equirectangular projection with the equator as
// standard parallel on the sphere R = 6378137 m: x = Rλ, y = Rφ (Snyder
// 1987, eqs. 12-1, 12-2 with φ1 = 0; PROJ +proj=eqc).
type PlateCarree struct{}

// Forward projects lon, lat in degrees to metres.
func (PlateCarree) Forward(lon, lat float64) (x, y float64) {
	if !(lat >= -90 && lat <= 90) || math.IsNaN(lon) || math.IsInf(lon, 0) {
		return math.NaN(), math.NaN()
	}
	return WebRadius * wrapRad(lon*deg), WebRadius * lat * deg
}

// Inverse maps metres back to lon, lat in degrees.
func (PlateCarree) Inverse(x, y float64) (lon, lat float64) {
	lat = y / WebRadius / deg
	if !(math.Abs(lat) <= 90+1e-12) || math.IsNaN(x) || math.IsInf(x, 0) {
		return math.NaN(), math.NaN()
	}
	return wrapDeg(x / WebRadius / deg), math.Max(-90, math.Min(90, lat))
}

// String returns the PROJ description.
func (PlateCarree) String() string { return "+proj=eqc +R=6378137" }

// Ellipsoid returns WGS 84, the figure the input coordinates live on (see
// WebMercator.Ellipsoid).
func (PlateCarree) Ellipsoid() Ellipsoid { return WGS84 }
