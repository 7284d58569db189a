package proj

import (
	"errors"
	"fmt"
	"math"
)

// Albers is the Albers Equal-Area Conic projection on a sphere or an
// ellipsoid (Snyder 1987, §14, eqs. 14-1 to 14-6 for the sphere, 14-12 to
// 14-19 and 3-12, 3-16 for the ellipsoid; IOGP GN7-2 method 9822). On a
// sphere (F = 0) the ellipsoid formulas reduce exactly to the sphere ones,
// so one code path serves both.
type Albers struct {
	ell                    Ellipsoid
	lat0, lon0, lat1, lat2 float64 // degrees
	fe, fn                 float64 // metres

	e, e2 float64
	n, c  float64 // Snyder's n and C
	rho0  float64 // metres
	qp    float64 // q at the pole
}

// NewAlbers returns the Albers projection on e with latitude of origin
// lat0, central meridian lon0 and standard parallels lat1, lat2 (degrees),
// and false easting fe and false northing fn (metres). lat1 = lat2 gives
// the tangent cone. It rejects NaN or infinite values, latitudes outside
// [-90, 90], longitudes outside [-180, 180], and standard parallels
// symmetric about the equator (lat1 = -lat2), where the cone becomes a
// cylinder and the formulas divide by zero.
func NewAlbers(e Ellipsoid, lat0, lon0, lat1, lat2, fe, fn float64) (*Albers, error) {
	if err := e.validate(); err != nil {
		return nil, err
	}
	for _, c := range []struct {
		name string
		v    float64
	}{{"albers: latitude of origin", lat0}, {"albers: standard parallel 1", lat1}, {"albers: standard parallel 2", lat2}} {
		if err := checkLat(c.name, c.v); err != nil {
			return nil, err
		}
	}
	if err := checkLon("albers: central meridian", lon0); err != nil {
		return nil, err
	}
	if err := checkFinite("albers: false easting", fe); err != nil {
		return nil, err
	}
	if err := checkFinite("albers: false northing", fn); err != nil {
		return nil, err
	}
	if math.Abs(lat1+lat2) < 1e-9 {
		return nil, fmt.Errorf("proj: albers: standard parallels %v and %v are symmetric about the equator (the cone would be a cylinder)", lat1, lat2)
	}
	p := &Albers{ell: e, lat0: lat0, lon0: lon0, lat1: lat1, lat2: lat2, fe: fe, fn: fn}
	p.e2 = e.E2()
	p.e = math.Sqrt(p.e2)
	p.qp = qsfn(1, p.e, p.e2)

	s1, c1 := math.Sincos(lat1 * deg)
	m1 := msfn(s1, c1, p.e2)
	q1 := qsfn(s1, p.e, p.e2)
	if math.Abs(lat1-lat2) < 1e-10 {
		// Tangent cone: the limit of (m1²−m2²)/(q2−q1) is sin φ1 on the
		// ellipsoid as on the sphere (d(m²)/dφ ÷ dq/dφ = −sin φ).
		p.n = s1
	} else {
		s2, c2 := math.Sincos(lat2 * deg)
		m2 := msfn(s2, c2, p.e2)
		q2 := qsfn(s2, p.e, p.e2)
		p.n = (m1*m1 - m2*m2) / (q2 - q1)
	}
	if p.n == 0 || math.IsNaN(p.n) {
		return nil, errors.New("proj: albers: standard parallels give a cone constant of zero")
	}
	p.c = m1*m1 + p.n*q1
	p.rho0 = p.rho(qsfn(math.Sin(lat0*deg), p.e, p.e2))
	if math.IsNaN(p.rho0) {
		return nil, fmt.Errorf("proj: albers: latitude of origin %v lies outside the cone of standard parallels %v, %v", lat0, lat1, lat2)
	}
	return p, nil
}

// rho is Snyder eq. 14-12: ρ = a√(C − nq)/n, NaN where C − nq < 0.
func (p *Albers) rho(q float64) float64 {
	v := p.c - p.n*q
	if v < 0 {
		if v < -1e-12 {
			return math.NaN()
		}
		v = 0
	}
	return p.ell.A * math.Sqrt(v) / p.n
}

// Polar returns the polar coordinates of a point on the cone's plane: ρ in
// metres from the apex and θ = n(λ − λ0) in degrees (Snyder eqs. 14-12,
// 14-4).
func (p *Albers) Polar(lon, lat float64) (rho, theta float64) {
	if !(lat >= -90 && lat <= 90) || math.IsNaN(lon) || math.IsInf(lon, 0) {
		return math.NaN(), math.NaN()
	}
	rho = p.rho(qsfn(math.Sin(lat*deg), p.e, p.e2))
	theta = p.n * wrapRad((lon-p.lon0)*deg)
	return rho, theta / deg
}

// Forward projects lon, lat in degrees to metres (Snyder eqs. 14-1, 14-2).
func (p *Albers) Forward(lon, lat float64) (x, y float64) {
	rho, theta := p.Polar(lon, lat)
	if math.IsNaN(rho) {
		return math.NaN(), math.NaN()
	}
	s, c := math.Sincos(theta * deg)
	return p.fe + rho*s, p.fn + p.rho0 - rho*c
}

// Inverse maps metres back to lon, lat in degrees (Snyder eqs. 14-8 to
// 14-11 with 3-16 iterated).
func (p *Albers) Inverse(x, y float64) (lon, lat float64) {
	x -= p.fe
	y = p.rho0 - (y - p.fn)
	if math.IsNaN(x) || math.IsNaN(y) || math.IsInf(x, 0) || math.IsInf(y, 0) {
		return math.NaN(), math.NaN()
	}
	if p.n < 0 {
		x, y = -x, -y
	}
	rho := math.Hypot(x, y)
	theta := math.Atan2(x, y)
	if math.Abs(theta) > math.Abs(p.n)*math.Pi*(1+1e-12) {
		return math.NaN(), math.NaN() // outside the fan the cone unrolls to
	}
	r := rho * p.n / p.ell.A
	q := (p.c - r*r) / p.n
	if math.Abs(q) > p.qp*(1+1e-12) {
		return math.NaN(), math.NaN()
	}
	phi := phiFromQ(q, p.e, p.e2, p.qp)
	lon = wrapDeg(p.lon0 + theta/p.n/deg)
	return lon, phi / deg
}

// N returns the cone constant n (Snyder eq. 14-14; 14-6 on the sphere).
func (p *Albers) N() float64 { return p.n }

// C returns Snyder's constant C = m1² + n·q1 (eq. 14-13; 14-5 on the sphere).
func (p *Albers) C() float64 { return p.c }

// Rho0 returns ρ0, the radius of the parallel of origin in metres.
func (p *Albers) Rho0() float64 { return p.rho0 }

// Ellipsoid returns the ellipsoid the projection is built on.
func (p *Albers) Ellipsoid() Ellipsoid { return p.ell }

// String returns the PROJ description.
func (p *Albers) String() string {
	return projString("+proj=aea", "+lat_0="+num(p.lat0), "+lon_0="+num(p.lon0),
		"+lat_1="+num(p.lat1), "+lat_2="+num(p.lat2), falseOrigin(p.fe, p.fn), p.ell.proj(), "+units=m")
}
