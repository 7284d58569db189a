package proj

import (
	"math"
)

// aspect of an azimuthal projection.
type aspect int

const (
	oblique aspect = iota // includes the equatorial aspect (β1 = 0)
	northPolar
	southPolar
)

// LAEA is the Lambert Azimuthal Equal-Area projection on a sphere or an
// ellipsoid, in its oblique, equatorial and polar aspects (Snyder 1987,
// §24, eqs. 24-2 to 24-4 for the sphere, 24-13 to 24-20 and 3-11, 3-12 for
// the ellipsoid; IOGP GN7-2 method 9820). On a sphere the ellipsoid
// formulas reduce exactly to the sphere ones (β = φ, Rq = R, D = 1).
type LAEA struct {
	ell        Ellipsoid
	lat0, lon0 float64 // degrees
	fe, fn     float64 // metres

	aspect       aspect
	e, e2        float64
	qp, rq, d    float64 // Snyder's qp, Rq and D
	sinb1, cosb1 float64 // authalic latitude of the centre
}

// NewLAEA returns the Lambert Azimuthal Equal-Area projection on e centred
// at lat0, lon0 (degrees) with false easting fe and false northing fn
// (metres). A centre within 1e-10 rad of a pole gives the polar aspect. It
// rejects NaN or infinite values, latitudes outside [-90, 90] and
// longitudes outside [-180, 180].
func NewLAEA(e Ellipsoid, lat0, lon0, fe, fn float64) (*LAEA, error) {
	if err := e.validate(); err != nil {
		return nil, err
	}
	if err := checkLat("laea: latitude of centre", lat0); err != nil {
		return nil, err
	}
	if err := checkLon("laea: longitude of centre", lon0); err != nil {
		return nil, err
	}
	if err := checkFinite("laea: false easting", fe); err != nil {
		return nil, err
	}
	if err := checkFinite("laea: false northing", fn); err != nil {
		return nil, err
	}
	p := &LAEA{ell: e, lat0: lat0, lon0: lon0, fe: fe, fn: fn}
	p.e2 = e.E2()
	p.e = math.Sqrt(p.e2)
	p.qp = qsfn(1, p.e, p.e2)
	p.rq = e.A * math.Sqrt(p.qp/2)
	phi0 := lat0 * deg
	switch {
	case math.Abs(math.Abs(phi0)-math.Pi/2) < 1e-10:
		p.aspect = northPolar
		if phi0 < 0 {
			p.aspect = southPolar
		}
	case math.Abs(phi0) < 1e-10:
		p.sinb1, p.cosb1 = 0, 1
		p.d = e.A / p.rq // D = a·m1/(Rq cos β1) with m1 = 1
	default:
		s, c := math.Sincos(phi0)
		p.sinb1 = qsfn(s, p.e, p.e2) / p.qp
		p.cosb1 = math.Sqrt(1 - p.sinb1*p.sinb1)
		p.d = e.A * msfn(s, c, p.e2) / (p.rq * p.cosb1)
	}
	return p, nil
}

// kPrime is Snyder's k′ (eq. 24-2 on the sphere, B/Rq of eq. 24-19 on the
// ellipsoid): the scale perpendicular to the radius from the centre, for a
// point of authalic latitude β at longitude difference dl. NaN at the
// antipode of the centre.
func (p *LAEA) kPrime(sinb, cosb, cosdl float64) float64 {
	den := 1 + p.sinb1*sinb + p.cosb1*cosb*cosdl
	if den < 1e-15 {
		return math.NaN()
	}
	return math.Sqrt(2 / den)
}

// authalic returns sin β and cos β for latitude lat in degrees, and
// v = qp − |q|. Above 45° it goes through qpMinusQ, so that cos β keeps its
// digits near the poles.
func (p *LAEA) authalic(lat float64) (sinb, cosb, v float64) {
	if math.Abs(lat) <= 45 {
		s, c := math.Sincos(lat * deg)
		if p.e == 0 {
			return s, c, 2 - 2*math.Abs(s)
		}
		q := qsfn(s, p.e, p.e2)
		sinb = q / p.qp
		return sinb, math.Sqrt(1 - sinb*sinb), p.qp - math.Abs(q)
	}
	v = qpMinusQ((90-math.Abs(lat))*deg, p.e, p.e2)
	om := v / p.qp // 1 − sin|β|
	return math.Copysign(1-om, lat), math.Sqrt(om * (2 - om)), v
}

// Forward projects lon, lat in degrees to metres.
func (p *LAEA) Forward(lon, lat float64) (x, y float64) {
	if !(lat >= -90 && lat <= 90) || math.IsNaN(lon) || math.IsInf(lon, 0) {
		return math.NaN(), math.NaN()
	}
	sdl, cdl := math.Sincos(wrapRad((lon - p.lon0) * deg))
	sinb, cosb, v := p.authalic(lat)
	switch p.aspect {
	case northPolar, southPolar:
		// Snyder eqs. 24-21 to 24-23 (ellipsoid), 24-5, 24-6 (sphere):
		// ρ = a√(qp ∓ q), from v = qp − |q|.
		if (lat < 0 && p.aspect == northPolar) || (lat > 0 && p.aspect == southPolar) {
			v = 2*p.qp - v // the far hemisphere
		}
		if p.aspect == northPolar {
			cdl = -cdl
		}
		if v >= 2*p.qp*(1-1e-15) {
			return math.NaN(), math.NaN() // the opposite pole
		}
		rho := p.ell.A * math.Sqrt(v)
		return p.fe + rho*sdl, p.fn + rho*cdl
	}
	b := p.rq * p.kPrime(sinb, cosb, cdl)
	if math.IsNaN(b) {
		return math.NaN(), math.NaN()
	}
	x = b * p.d * cosb * sdl
	y = b / p.d * (p.cosb1*sinb - p.sinb1*cosb*cdl)
	return p.fe + x, p.fn + y
}

// Inverse maps metres back to lon, lat in degrees (Snyder eqs. 24-26 to
// 24-31 with 3-16 iterated; 20-14, 24-16, 24-17 on the sphere).
func (p *LAEA) Inverse(x, y float64) (lon, lat float64) {
	x -= p.fe
	y -= p.fn
	if math.IsNaN(x) || math.IsNaN(y) || math.IsInf(x, 0) || math.IsInf(y, 0) {
		return math.NaN(), math.NaN()
	}
	switch p.aspect {
	case northPolar, southPolar:
		rho := math.Hypot(x, y)
		r := rho / p.ell.A
		v := r * r // qp ∓ q
		if v > 2*p.qp*(1+1e-12) {
			return math.NaN(), math.NaN()
		}
		lat := 90 - colatFromV(math.Min(v, 2*p.qp), p.e, p.e2, p.qp)/deg
		lam := math.Atan2(x, -y)
		if p.aspect == southPolar {
			lat = -lat
			lam = math.Atan2(x, y)
		}
		if rho == 0 {
			lam = 0
		}
		return wrapDeg(p.lon0 + lam/deg), lat
	}
	xd, yd := x/p.d, y*p.d
	rho := math.Hypot(xd, yd)
	if rho == 0 {
		return p.lon0, p.lat0
	}
	h := rho / (2 * p.rq)
	if h > 1+1e-12 {
		return math.NaN(), math.NaN()
	}
	ce := 2 * math.Asin(math.Min(1, h))
	sce, cce := math.Sincos(ce)
	// The components of cos β·(sin Δλ, cos Δλ) and sin β; taking β by atan2
	// keeps full precision near the poles, where asin would not.
	u := xd * sce
	v := rho*p.cosb1*cce - yd*p.sinb1*sce
	w := rho*cce*p.sinb1 + yd*sce*p.cosb1
	lam := math.Atan2(u, v)
	beta := math.Atan2(w, math.Hypot(u, v))
	return wrapDeg(p.lon0 + lam/deg), phiFromBeta(beta, p.e, p.e2, p.qp) / deg
}

// Ellipsoid returns the ellipsoid the projection is built on.
func (p *LAEA) Ellipsoid() Ellipsoid { return p.ell }

// String returns the PROJ description.
func (p *LAEA) String() string {
	return projString("+proj=laea", "+lat_0="+num(p.lat0), "+lon_0="+num(p.lon0),
		falseOrigin(p.fe, p.fn), p.ell.proj(), "+units=m")
}
