package proj

import "math"

// ellipsoidal is implemented by projections that know the figure their
// geographic coordinates live on.
type ellipsoidal interface {
	Ellipsoid() Ellipsoid
}

// scaleStep is the step of the numerical derivatives in ScaleAt, radians.
// With central differences the truncation error is of order step² (1e-12)
// and the rounding error of order 1e-16·x/step (1e-10 for x ≈ 1e7 m, the
// larger of the two), well below the 1e-7 of the handbook tables.
const scaleStep = 1e-6

// ScaleAt returns the scale factors of p at lon, lat (degrees): h along
// the meridian and k along the parallel, as map distance over ground
// distance (Snyder 1987, §4). Ground distances are measured on p's
// ellipsoid when p reports one (all projections of this package do; Web
// Mercator and PlateCarree report WGS 84), else on WGS 84. Equal-area
// projections have h·k = 1 where the graticule meets at right angles.
//
// For a print page, a scale bar drawn along the map's x axis at the
// central meridian of a conic or azimuthal map follows k. The derivatives
// are numerical (central differences, one-sided beside a seam where the
// projection jumps); at the poles, where k is undefined, the latitude is
// moved 1e-6° towards the equator. Points the projection cannot show give
// NaN, NaN.
func ScaleAt(p Projection, lon, lat float64) (h, k float64) {
	if !(lat >= -90 && lat <= 90) || math.IsNaN(lon) || math.IsInf(lon, 0) {
		return math.NaN(), math.NaN()
	}
	ell := WGS84
	if e, ok := p.(ellipsoidal); ok {
		ell = e.Ellipsoid()
	}
	const edge = 90 - 1e-6
	lat = math.Max(-edge, math.Min(edge, lat))
	const dd = scaleStep / deg // step in degrees
	// ∂(x,y)/∂λ and ∂(x,y)/∂φ per radian.
	dxl, dyl := derivative(func(t float64) (float64, float64) { return p.Forward(lon+t, lat) }, dd)
	// Keep the latitude steps inside [-90, 90].
	dxp, dyp := derivative(func(t float64) (float64, float64) { return p.Forward(lon, lat+t) }, math.Min(dd, (90-math.Abs(lat))/2))
	s, c := math.Sincos(lat * deg)
	e2 := ell.E2()
	w := math.Sqrt(1 - e2*s*s)
	nu := ell.A / w                        // prime vertical radius N
	rhoM := ell.A * (1 - e2) / (w * w * w) // meridian radius M
	h = math.Hypot(dxp, dyp) / deg / rhoM
	k = math.Hypot(dxl, dyl) / deg / (nu * c)
	return h, k
}

// derivative returns d(x,y)/dt per degree of t at t = 0 with step dd: by
// central difference when both sides agree, otherwise by the second-order
// one-sided difference on the side that does not cross a seam.
func derivative(f func(t float64) (float64, float64), dd float64) (dx, dy float64) {
	x0, y0 := f(0)
	xm, ym := f(-dd)
	xp, yp := f(dd)
	if math.IsNaN(x0) || math.IsNaN(y0) {
		return math.NaN(), math.NaN()
	}
	back := math.Hypot(x0-xm, y0-ym)
	fwd := math.Hypot(xp-x0, yp-y0)
	if !math.IsNaN(back) && !math.IsNaN(fwd) && fwd <= 2*back && back <= 2*fwd {
		return (xp - xm) / (2 * dd), (yp - ym) / (2 * dd)
	}
	sign := 1.0
	if math.IsNaN(fwd) || (!math.IsNaN(back) && back < fwd) {
		sign = -1
	}
	x1, y1 := f(sign * dd)
	x2, y2 := f(sign * 2 * dd)
	return sign * (-3*x0 + 4*x1 - x2) / (2 * dd), sign * (-3*y0 + 4*y1 - y2) / (2 * dd)
}
