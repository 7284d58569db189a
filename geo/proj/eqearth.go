package proj

import "math"

// EqualEarth is the Equal Earth projection (B. Šavrič, T. Patterson and
// B. Jenny, "The Equal Earth map projection", International Journal of
// Geographical Information Science 33(3), 2019, eqs. 1 and 2): a
// pseudocylindrical equal-area world projection,
//
//	θ = asin(√3/2 · sin β),
//	x = R · 2√3 λ cos θ / (3(A1 + 3A2θ² + 7A3θ⁶ + 9A4θ⁸)),
//	y = R · (A1θ + A2θ³ + A3θ⁷ + A4θ⁹),
//
// with A1 = 1.340264, A2 = −0.081106, A3 = 0.000893, A4 = 0.003796. On a
// sphere β = φ and R is its radius; on an ellipsoid, as in PROJ's
// +proj=eqearth, β is the authalic latitude and R the authalic radius
// a·√(qp/2) (Snyder 1987, eqs. 3-11, 3-12), so areas stay true on the
// ellipsoid.
type EqualEarth struct {
	ell    Ellipsoid
	lon0   float64 // degrees
	fe, fn float64 // metres
	e, e2  float64
	qp, rq float64 // Snyder's qp and the authalic radius
}

// Equal Earth's polynomial constants (Šavrič et al. 2019, eq. 2).
const (
	eqA1 = 1.340264
	eqA2 = -0.081106
	eqA3 = 0.000893
	eqA4 = 0.003796
	eqM  = 0.8660254037844386 // √3/2
)

// NewEqualEarth returns the Equal Earth projection on e with central
// meridian lon0 (degrees) and false easting fe and northing fn (metres).
func NewEqualEarth(e Ellipsoid, lon0, fe, fn float64) (*EqualEarth, error) {
	if err := e.validate(); err != nil {
		return nil, err
	}
	if err := checkLon("eqearth: central meridian", lon0); err != nil {
		return nil, err
	}
	if err := checkFinite("eqearth: false easting", fe); err != nil {
		return nil, err
	}
	if err := checkFinite("eqearth: false northing", fn); err != nil {
		return nil, err
	}
	p := &EqualEarth{ell: e, lon0: lon0, fe: fe, fn: fn}
	p.e2 = e.E2()
	p.e = math.Sqrt(p.e2)
	p.qp = qsfn(1, p.e, p.e2)
	p.rq = e.A * math.Sqrt(p.qp/2)
	return p, nil
}

// Forward projects lon, lat in degrees to metres.
func (p *EqualEarth) Forward(lon, lat float64) (x, y float64) {
	if !(lat >= -90 && lat <= 90) || math.IsNaN(lon) || math.IsInf(lon, 0) {
		return math.NaN(), math.NaN()
	}
	sinb := math.Sin(lat * deg)
	if p.e != 0 {
		sinb = math.Max(-1, math.Min(1, qsfn(sinb, p.e, p.e2)/p.qp))
	}
	t := math.Asin(eqM * sinb)
	t2 := t * t
	t6 := t2 * t2 * t2
	l := wrapRad((lon - p.lon0) * deg)
	x = l * math.Cos(t) / (eqM * (eqA1 + 3*eqA2*t2 + t6*(7*eqA3+9*eqA4*t2)))
	y = t * (eqA1 + eqA2*t2 + t6*(eqA3+eqA4*t2))
	return p.fe + p.rq*x, p.fn + p.rq*y
}

// Inverse maps metres back to lon, lat in degrees: θ from y by Newton's
// method on the polynomial, then λ from x and β = asin(sin θ / (√3/2)).
// Points outside the map's outline give NaN, NaN.
func (p *EqualEarth) Inverse(x, y float64) (lon, lat float64) {
	if math.IsNaN(x) || math.IsNaN(y) || math.IsInf(x, 0) || math.IsInf(y, 0) {
		return math.NaN(), math.NaN()
	}
	x = (x - p.fe) / p.rq
	y = (y - p.fn) / p.rq
	tMax := math.Asin(eqM) // θ at the poles, π/3
	yMax := tMax * (eqA1 + eqA2*tMax*tMax + math.Pow(tMax, 6)*(eqA3+eqA4*tMax*tMax))
	if math.Abs(y) > yMax*(1+1e-12) {
		return math.NaN(), math.NaN()
	}
	y = math.Max(-yMax, math.Min(yMax, y))
	t := y / eqA1
	var t2, t6 float64
	for i := 0; i < inverseIterations; i++ {
		t2 = t * t
		t6 = t2 * t2 * t2
		f := t*(eqA1+eqA2*t2+t6*(eqA3+eqA4*t2)) - y
		fp := eqA1 + 3*eqA2*t2 + t6*(7*eqA3+9*eqA4*t2)
		d := f / fp
		t -= d
		if math.Abs(d) < 1e-14 {
			break
		}
	}
	t2 = t * t
	t6 = t2 * t2 * t2
	l := eqM * x * (eqA1 + 3*eqA2*t2 + t6*(7*eqA3+9*eqA4*t2)) / math.Cos(t)
	if math.Abs(l) > math.Pi*(1+1e-12) {
		return math.NaN(), math.NaN()
	}
	// sin β = sin θ / M; cos β from M − sin θ = 2 cos((π/3+θ)/2) sin((π/3−θ)/2)
	// without cancellation near the poles (θ → π/3).
	at := math.Abs(t)
	mMinus := math.Max(0, 2*math.Cos((math.Pi/3+at)/2)*math.Sin((math.Pi/3-at)/2))
	beta := math.Copysign(math.Atan2(math.Sin(at), math.Sqrt(mMinus*(eqM+math.Sin(at)))), t)
	return wrapDeg(p.lon0 + l/deg), phiFromBeta(beta, p.e, p.e2, p.qp) / deg
}

// Ellipsoid returns the ellipsoid the projection is built on.
func (p *EqualEarth) Ellipsoid() Ellipsoid { return p.ell }

// String returns the PROJ description.
func (p *EqualEarth) String() string {
	s := projString("+proj=eqearth", "+lon_0="+num(p.lon0))
	if p.fe != 0 || p.fn != 0 {
		s += " " + falseOrigin(p.fe, p.fn)
	}
	return projString(s, p.ell.proj(), "+units=m")
}
