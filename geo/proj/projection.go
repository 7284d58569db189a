package proj

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Projection maps geographic coordinates to a plane and back.
//
// Forward takes longitude and latitude in degrees and returns easting and
// northing in metres; Inverse undoes it. Both return NaN, NaN for points
// they cannot map. String describes the projection as a PROJ string
// ("+proj=aea +lat_0=23 ..."), which cs2cs accepts.
type Projection interface {
	Forward(lon, lat float64) (x, y float64)
	Inverse(x, y float64) (lon, lat float64)
	String() string
}

// Ellipsoid is a reference ellipsoid given by its semi-major axis A in
// metres and its flattening F = (A-B)/A. F = 0 is a sphere of radius A.
type Ellipsoid struct {
	A, F float64
}

// Reference ellipsoids. Values: EPSG geodetic parameter dataset (WGS 84
// 7030, GRS 1980 7019, Clarke 1866 7008 defined by a and b, International
// 1924 7022), as PROJ holds them.
var (
	// WGS84 is the World Geodetic System 1984 ellipsoid.
	WGS84 = Ellipsoid{A: 6378137, F: 1 / 298.257223563}
	// GRS80 is the Geodetic Reference System 1980 ellipsoid (NAD83, ETRS89, GDA94).
	GRS80 = Ellipsoid{A: 6378137, F: 1 / 298.257222101}
	// Clarke1866 is defined by a = 6378206.4 m, b = 6356583.8 m.
	Clarke1866 = Ellipsoid{A: 6378206.4, F: (6378206.4 - 6356583.8) / 6378206.4}
	// International1924 (Hayford) has a = 6378388 m, 1/f = 297.
	International1924 = Ellipsoid{A: 6378388, F: 1.0 / 297}
)

// Sphere returns the sphere of radius r metres as an Ellipsoid.
func Sphere(r float64) Ellipsoid { return Ellipsoid{A: r} }

// E2 returns the first eccentricity squared, e² = f(2-f).
func (e Ellipsoid) E2() float64 { return e.F * (2 - e.F) }

// IsSphere reports whether the ellipsoid has no flattening.
func (e Ellipsoid) IsSphere() bool { return e.F == 0 }

func (e Ellipsoid) validate() error {
	if !(e.A > 0) || math.IsInf(e.A, 0) {
		return fmt.Errorf("proj: ellipsoid semi-major axis %v is not a positive finite length", e.A)
	}
	if !(e.F >= 0 && e.F < 1) {
		return fmt.Errorf("proj: ellipsoid flattening %v is outside [0, 1)", e.F)
	}
	return nil
}

// proj returns the PROJ parameters naming the ellipsoid.
func (e Ellipsoid) proj() string {
	switch e {
	case WGS84:
		return "+ellps=WGS84"
	case GRS80:
		return "+ellps=GRS80"
	case Clarke1866:
		return "+ellps=clrk66"
	case International1924:
		return "+ellps=intl"
	}
	if e.IsSphere() {
		return "+R=" + num(e.A)
	}
	return "+a=" + num(e.A) + " +rf=" + num(1/e.F)
}

// String describes the ellipsoid in PROJ form, e.g. "+ellps=GRS80".
func (e Ellipsoid) String() string { return e.proj() }

// num formats a parameter the shortest way that reads back exactly.
func num(v float64) string { return strconv.FormatFloat(v, 'f', -1, 64) }

// projString joins PROJ parameters.
func projString(parts ...string) string { return strings.Join(parts, " ") }

const (
	deg = math.Pi / 180
	// inverseIterations bounds every latitude iteration; each is Newton's
	// method (or eq. 3-16, which is Newton's method on q) from the series
	// of Snyder eq. 3-18, which is within 2.5e-10 rad on WGS 84 (measured
	// on a 0.01° grid), so one or two steps suffice.
	inverseIterations = 20
)

// checkLat reports an error for a latitude outside [-90, 90] or NaN.
func checkLat(name string, v float64) error {
	if !(v >= -90 && v <= 90) {
		return fmt.Errorf("proj: %s %v is outside [-90, 90] degrees", name, v)
	}
	return nil
}

// checkLon reports an error for a longitude outside [-180, 180] or NaN.
func checkLon(name string, v float64) error {
	if !(v >= -180 && v <= 180) {
		return fmt.Errorf("proj: %s %v is outside [-180, 180] degrees", name, v)
	}
	return nil
}

// checkFinite reports an error for NaN or infinite false easting/northing.
func checkFinite(name string, v float64) error {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return fmt.Errorf("proj: %s %v is not a finite number", name, v)
	}
	return nil
}

// wrapRad brings a longitude difference in radians into [-π, π], leaving
// values already inside untouched so that ±180° stay where they are.
func wrapRad(l float64) float64 {
	if l < -math.Pi || l > math.Pi {
		l = math.Remainder(l, 2*math.Pi)
	}
	return l
}

// wrapDeg brings a longitude in degrees into [-180, 180].
func wrapDeg(l float64) float64 {
	if l < -180 || l > 180 {
		l = math.Remainder(l, 360)
	}
	return l
}

// qsfn is Snyder's q (eq. 3-12): q = (1-e²)[sinφ/(1-e²sin²φ) -
// (1/2e) ln((1-e sinφ)/(1+e sinφ))], and 2 sinφ on the sphere.
// It is computed for |sinφ| and given the sign of sinφ, so that q is
// exactly odd and q(−90°) = −qp to the last bit.
func qsfn(sinphi, e, e2 float64) float64 {
	if e == 0 {
		return 2 * sinphi
	}
	s := math.Abs(sinphi)
	es := e * s
	return math.Copysign((1-e2)*(s/(1-es*es)-1/(2*e)*math.Log((1-es)/(1+es))), sinphi)
}

// qpMinusQ returns qp − q for the colatitude chi = π/2 − φ ≥ 0 in radians
// without the cancellation of subtracting two nearly equal q values near
// the pole: with s = sin φ = cos χ and 1 − s = 2 sin²(χ/2),
//
//	qp − q = (1−s)(1+e²s)/(1−e²s²) + (1−e²)/(2e)·ln(1 + 2e(1−s)/((1+es)(1−e))),
//
// which is q's definition (Snyder eq. 3-12) regrouped. It is 2(1−s) on
// the sphere.
func qpMinusQ(chi, e, e2 float64) float64 {
	h := math.Sin(chi / 2)
	oms := 2 * h * h
	if e == 0 {
		return 2 * oms
	}
	s := math.Cos(chi)
	es := e * s
	return oms*(1+e2*s)/(1-es*es) + (1-e2)/(2*e)*math.Log1p(2*e*oms/((1+es)*(1-e)))
}

// colatFromV inverts qpMinusQ: it returns the colatitude χ ≥ 0 whose
// qp − q equals v, by Newton's method (d(qp−q)/dχ = dq/dφ =
// 2(1−e²) sin χ/(1 − e² cos²χ)², Snyder eq. 3-12 differentiated). It
// starts from the authalic colatitude χβ = 2 asin(√(v/2qp)) corrected by
// the series of Snyder eq. 3-18 written for colatitudes (within 2.5e-10
// rad), so that one or two steps reach full precision.
func colatFromV(v, e, e2, qp float64) float64 {
	if !(v > 0) {
		if v == 0 {
			return 0
		}
		return math.NaN()
	}
	chb := 2 * math.Asin(math.Min(1, math.Sqrt(v/(2*qp))))
	if e == 0 {
		return chb
	}
	e4 := e2 * e2
	e6 := e4 * e2
	chi := chb - (e2/3+31*e4/180+517*e6/5040)*math.Sin(2*chb) +
		(23*e4/360+251*e6/3780)*math.Sin(4*chb) - (761*e6/45360)*math.Sin(6*chb)
	for i := 0; i < inverseIterations; i++ {
		sc, cc := math.Sincos(chi)
		w := 1 - e2*cc*cc
		d := (qpMinusQ(chi, e, e2) - v) / (2 * (1 - e2) * sc / (w * w))
		chi -= d
		if math.Abs(d) <= 1e-15*chi {
			break
		}
	}
	return math.Max(0, math.Min(math.Pi, chi))
}

// phiFromBeta returns the geodetic latitude of authalic latitude beta
// (radians). Near the poles it works on colatitudes (colatFromV), where
// going through q = qp sin β would lose half the digits.
func phiFromBeta(beta, e, e2, qp float64) float64 {
	if e == 0 || math.IsNaN(beta) {
		return beta
	}
	if math.Abs(beta) <= math.Pi/4 {
		return phiFromQ(qp*math.Sin(beta), e, e2, qp)
	}
	h := math.Sin((math.Pi/2 - math.Abs(beta)) / 2)
	v := qp * 2 * h * h // qp(1 − sin|β|)
	return math.Copysign(math.Pi/2-colatFromV(v, e, e2, qp), beta)
}

// msfn is Snyder's m (eq. 14-15): cosφ/√(1-e²sin²φ).
func msfn(sinphi, cosphi, e2 float64) float64 {
	return cosphi / math.Sqrt(1-e2*sinphi*sinphi)
}

// phiFromQ inverts q(φ) for latitude in radians, by Snyder eq. 3-16
// iterated from φ = asin(q/2) with a bounded number of steps. qp is q at
// the pole; |q| ≥ qp gives ±π/2.
func phiFromQ(q, e, e2, qp float64) float64 {
	if math.IsNaN(q) {
		return math.NaN()
	}
	if e == 0 {
		return math.Asin(math.Max(-1, math.Min(1, q/2)))
	}
	if math.Abs(q) >= qp {
		return math.Copysign(math.Pi/2, q)
	}
	// Start from the authalic latitude with the series of Snyder eq. 3-18
	// (truncated after e⁶, within 2.5e-10 rad = 1.4e-8° on WGS 84, the
	// same as the difference of PROJ 9.1's LAEA inverse from ours in the
	// cs2cs test, so PROJ seems to stop at the series); eq. 3-16 then
	// converges in a step or two.
	beta := math.Asin(q / qp)
	e4 := e2 * e2
	e6 := e4 * e2
	phi := beta + (e2/3+31*e4/180+517*e6/5040)*math.Sin(2*beta) +
		(23*e4/360+251*e6/3780)*math.Sin(4*beta) + (761*e6/45360)*math.Sin(6*beta)
	for i := 0; i < inverseIterations; i++ {
		s, c := math.Sincos(phi)
		if c <= 0 {
			break
		}
		es := e * s
		w := 1 - es*es
		d := w * w / (2 * c) * (q/(1-e2) - s/w + 1/(2*e)*math.Log((1-es)/(1+es)))
		phi += d
		if math.Abs(d) < 1e-15 {
			break
		}
	}
	return math.Max(-math.Pi/2, math.Min(math.Pi/2, phi))
}

// falseOrigin formats +x_0 and +y_0.
func falseOrigin(fe, fn float64) string {
	return "+x_0=" + num(fe) + " +y_0=" + num(fn)
}
