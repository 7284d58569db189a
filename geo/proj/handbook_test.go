package proj

import (
	"math"
	"testing"
)

// dms converts degrees, minutes, seconds to decimal degrees.
func dms(d, m, s float64) float64 { return math.Copysign(math.Abs(d)+m/60+s/3600, d) }

func near(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if !(math.Abs(got-want) <= tol) {
		t.Errorf("%s = %.9f, want %.9f ± %g (off by %.3g)", what, got, want, tol, got-want)
	}
}

// IOGP Guidance Note 7-2, method 1024 (Popular Visualisation Pseudo
// Mercator), worked example.
func TestWebMercatorIOGPExample(t *testing.T) {
	var p WebMercator
	lon := dms(-100, 20, 0)    // 100°20′00.000″W
	lat := dms(24, 22, 54.433) // 24°22′54.433″N
	near(t, "lon rad", lon*deg, -1.751147016, 5e-10)
	near(t, "lat rad", lat*deg, 0.425542460, 5e-10)
	x, y := p.Forward(lon, lat)
	near(t, "E", x, -11169055.58, 0.01)
	near(t, "N", y, 2800000.00, 0.01)
	// Inverse example: (−11 169 055.58, 2 810 000.00) → φ = 0.426970023 rad
	// = 24°27′48.889″N, λ = 100°20′W.
	lon2, lat2 := p.Inverse(-11169055.58, 2810000.00)
	near(t, "inverse lat rad", lat2*deg, 0.426970023, 5e-10)
	near(t, "inverse lat", lat2, dms(24, 27, 48.889), 0.0005/3600)
	near(t, "inverse lon", lon2, lon, 0.01/WebRadius/deg)
	// Square-world edge: atan(sinh π) (CHECKS.md, computed) maps to πR =
	// 20 037 508.342789 m, and Forward clamps beyond it.
	near(t, "max lat", WebMercatorMaxLat, math.Atan(math.Sinh(math.Pi))/deg, 1e-13)
	for _, l := range []float64{WebMercatorMaxLat, 89, 90} {
		_, y := p.Forward(0, l)
		near(t, "N at clamp", y, 20037508.342789, 1e-6)
	}
	x, _ = p.Forward(180, 0)
	near(t, "E at 180°", x, 20037508.342789, 1e-6)
}

// Snyder 1987, Appendix A, Albers Equal-Area Conic, sphere example:
// R = 1, φ1 = 29.5°, φ2 = 45.5°, φ0 = 23°, λ0 = 96°W; point 35°N, 75°W.
func TestAlbersSnyderSphere(t *testing.T) {
	p, err := NewAlbers(Sphere(1), 23, -96, 29.5, 45.5, 0, 0)
	if err != nil {
		t.Fatal(err)
	}
	const tol = 5e-8 // Snyder prints 7 decimals
	near(t, "n", p.N(), 0.6028370, tol)
	near(t, "C", p.C(), 1.3512213, tol)
	near(t, "rho0", p.Rho0(), 1.5562263, tol)
	rho, theta := p.Polar(-75, 35)
	near(t, "rho", rho, 1.3473026, tol)
	near(t, "theta", theta, 12.6595771, tol)
	x, y := p.Forward(-75, 35)
	near(t, "x", x, 0.2952720, tol)
	near(t, "y", y, 0.2416774, tol)
	h, k := ScaleAt(p, -75, 35)
	near(t, "h", h, 1.0085547, tol)
	near(t, "k", k, 0.9915178, tol)
	lon, lat := p.Inverse(x, y)
	near(t, "inverse lon", lon, -75, 1e-9)
	near(t, "inverse lat", lat, 35, 1e-9)
}

// Snyder 1987, Appendix A, Albers Equal-Area Conic, ellipsoid example:
// Clarke 1866, same parameters and point as the sphere example.
func TestAlbersSnyderEllipsoid(t *testing.T) {
	p, err := NewAlbers(Clarke1866, 23, -96, 29.5, 45.5, 0, 0)
	if err != nil {
		t.Fatal(err)
	}
	e := math.Sqrt(p.e2)
	near(t, "e²", p.e2, 0.00676866, 5e-9)
	for _, c := range []struct {
		lat, q float64
	}{{23, 0.7767080}, {29.5, 0.9792529}, {45.5, 1.4201080}, {35, 1.1410831}} {
		near(t, "q", qsfn(math.Sin(c.lat*deg), e, p.e2), c.q, 5e-8)
	}
	near(t, "n", p.N(), 0.6029035, 5e-8)
	near(t, "C", p.C(), 1.3491594, 5e-8)
	// Snyder prints ρ0 = 9 929 079.57; recomputation gives …079.56 with
	// the exact Clarke 1866 e² (CHECKS.md): allow 0.02 m.
	near(t, "rho0", p.Rho0(), 9929079.57, 0.02)
	rho, _ := p.Polar(-75, 35)
	near(t, "rho", rho, 8602328.23, 0.02)
	x, y := p.Forward(-75, 35)
	near(t, "x", x, 1885472.73, 0.02)
	near(t, "y", y, 1535925.00, 0.02)
	// k = 1 on the standard parallels (Snyder §14), h = 1/k (equal area).
	for _, lat := range []float64{29.5, 45.5} {
		h, k := ScaleAt(p, -80, lat)
		near(t, "k on standard parallel", k, 1, 1e-9)
		near(t, "h·k", h*k, 1, 1e-9)
	}
	lon, lat := p.Inverse(x, y)
	near(t, "inverse lon", lon, -75, 1e-9)
	near(t, "inverse lat", lat, 35.0000000, 1e-9)
}

// IOGP GIGS test 5109, GDA94 / Australian Albers (EPSG:3577), tolerance
// 0.05 m. Parameters (GRS80, φ1 = −18°, φ2 = −36°, φ0 = 0°, λ0 = 132°) are
// from memory; they reproduce the table.
func TestAlbersGIGS5109(t *testing.T) {
	p, err := NewAlbers(GRS80, 0, 132, -18, -36, 0, 0)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct{ lon, lat, x, y float64 }{
		{132, -27, 0, -2926820.89},
		{140, -20, 832799.36, -2170181.926},
		{170, -60, 2656914.716, -6784621.89},
	} {
		x, y := p.Forward(c.lon, c.lat)
		near(t, "E", x, c.x, 0.05)
		near(t, "N", y, c.y, 0.05)
		lon, lat := p.Inverse(c.x, c.y)
		near(t, "inverse lon", lon, c.lon, 0.05/6.4e6/deg)
		near(t, "inverse lat", lat, c.lat, 0.05/6.4e6/deg)
	}
}

// Snyder 1987, Appendix A, Lambert Azimuthal Equal-Area, sphere: R = 3,
// centre 40°N 100°W; point 20°S 100°E.
func TestLAEASnyderSphere(t *testing.T) {
	p, err := NewLAEA(Sphere(3), 40, -100, 0, 0)
	if err != nil {
		t.Fatal(err)
	}
	s, c := math.Sincos(-20 * deg)
	near(t, "k'", p.kPrime(s, c, math.Cos(200*deg)), 4.3912175, 5e-8)
	x, y := p.Forward(100, -20)
	near(t, "x", x, -4.2339303, 5e-8)
	near(t, "y", y, 4.0257775, 5e-8)
	lon, lat := p.Inverse(x, y)
	near(t, "inverse lon", lon, 100, 1e-9)
	near(t, "inverse lat", lat, -20, 1e-9)
}

// Snyder 1987, Appendix A, Lambert Azimuthal Equal-Area, ellipsoid:
// oblique on Clarke 1866 and north polar on International 1924.
func TestLAEASnyderEllipsoid(t *testing.T) {
	ob, err := NewLAEA(Clarke1866, 40, -100, 0, 0)
	if err != nil {
		t.Fatal(err)
	}
	x, y := ob.Forward(-110, 30)
	near(t, "oblique x", x, -965932.11, 0.01)
	near(t, "oblique y", y, -1056814.93, 0.01)
	lon, lat := ob.Inverse(x, y)
	near(t, "oblique inverse lon", lon, -110, 1e-9)
	near(t, "oblique inverse lat", lat, 30, 1e-9)

	po, err := NewLAEA(International1924, 90, -100, 0, 0)
	if err != nil {
		t.Fatal(err)
	}
	x, y = po.Forward(5, 80)
	near(t, "polar x", x, 1077459.69, 0.01)
	near(t, "polar y", y, 288704.45, 0.01)
	_, k := ScaleAt(po, 5, 80)
	near(t, "polar k", k, 1.0038196, 5e-8)
	lon, lat = po.Inverse(x, y)
	near(t, "polar inverse lon", lon, 5, 1e-9)
	near(t, "polar inverse lat", lat, 80, 1e-9)
}

// IOGP Guidance Note 7-2, method 9820, ETRS89-LAEA (EPSG:3035) example as
// quoted in CHECKS.md (the note itself not read): GRS80, φ0 = 52°N,
// λ0 = 10°E, FE = 4 321 000, FN = 3 210 000; 50°N 5°E.
func TestLAEAIOGPExample(t *testing.T) {
	p, err := NewLAEA(GRS80, 52, 10, 4321000, 3210000)
	if err != nil {
		t.Fatal(err)
	}
	x, y := p.Forward(5, 50)
	near(t, "E", x, 3962799.45, 0.01)
	near(t, "N", y, 2999718.85, 0.01)
	lon, lat := p.Inverse(3962799.45, 2999718.85)
	near(t, "inverse lon", lon, 5, 0.01/6.4e6/deg)
	near(t, "inverse lat", lat, 50, 0.01/6.4e6/deg)
	// At the centre an azimuthal equal-area map is true to scale
	// (Snyder §24: h = k = 1 at the centre only).
	h, k := ScaleAt(p, 10, 52)
	near(t, "h at centre", h, 1, 1e-9)
	near(t, "k at centre", k, 1, 1e-9)
}

// Web Mercator measured on WGS 84 is not conformal: at the equator k = 1
// (N = a) and h = a/M = 1/(1−e²) (computed from the GN7-2 method 1024
// formulas and the WGS 84 meridian radius M = a(1−e²) at φ = 0).
func TestWebMercatorScale(t *testing.T) {
	h, k := ScaleAt(WebMercator{}, 30, 0)
	near(t, "k", k, 1, 1e-9)
	near(t, "h", h, 1/(1-WGS84.E2()), 1e-9)
	// At 60° the parallel is stretched by a/(N cos φ) ≈ sec φ.
	_, k = ScaleAt(WebMercator{}, 179.9999999, 60)
	s := math.Sin(60 * deg)
	near(t, "k at 60° beside the antimeridian", k, math.Sqrt(1-WGS84.E2()*s*s)/math.Cos(60*deg), 1e-8)
	// Plate carrée: k = a/(N cos φ), h = a/M (x = aλ, y = aφ).
	h, k = ScaleAt(PlateCarree{}, -180, 45)
	s = math.Sin(45 * deg)
	w := math.Sqrt(1 - WGS84.E2()*s*s)
	near(t, "eqc k", k, w/math.Cos(45*deg), 1e-8)
	near(t, "eqc h", h, w*w*w/(1-WGS84.E2()), 1e-8)
}

// Constructors reject parameters the formulas cannot take, each with a
// message naming the parameter.
func TestConstructorErrors(t *testing.T) {
	nan, inf := math.NaN(), math.Inf(1)
	albers := func(e Ellipsoid, lat0, lon0, lat1, lat2, fe, fn float64) error {
		_, err := NewAlbers(e, lat0, lon0, lat1, lat2, fe, fn)
		return err
	}
	laea := func(e Ellipsoid, lat0, lon0, fe, fn float64) error {
		_, err := NewLAEA(e, lat0, lon0, fe, fn)
		return err
	}
	for _, c := range []struct {
		err  error
		want string
	}{
		{albers(WGS84, 0, 0, -20, 20, 0, 0), "proj: albers: standard parallels -20 and 20 are symmetric about the equator (the cone would be a cylinder)"},
		{albers(WGS84, 0, 0, 0, 0, 0, 0), "proj: albers: standard parallels 0 and 0 are symmetric about the equator (the cone would be a cylinder)"},
		{albers(WGS84, 0, 0, 29.5, 91, 0, 0), "proj: albers: standard parallel 2 91 is outside [-90, 90] degrees"},
		{albers(WGS84, -90.5, 0, 29.5, 45.5, 0, 0), "proj: albers: latitude of origin -90.5 is outside [-90, 90] degrees"},
		{albers(WGS84, 0, 0, nan, 45.5, 0, 0), "proj: albers: standard parallel 1 NaN is outside [-90, 90] degrees"},
		{albers(WGS84, 0, 181, 29.5, 45.5, 0, 0), "proj: albers: central meridian 181 is outside [-180, 180] degrees"},
		{albers(WGS84, 0, 0, 29.5, 45.5, inf, 0), "proj: albers: false easting +Inf is not a finite number"},
		{albers(WGS84, 0, 0, 29.5, 45.5, 0, nan), "proj: albers: false northing NaN is not a finite number"},
		{albers(Ellipsoid{A: 0}, 0, 0, 29.5, 45.5, 0, 0), "proj: ellipsoid semi-major axis 0 is not a positive finite length"},
		{albers(Ellipsoid{A: 6e6, F: -0.1}, 0, 0, 29.5, 45.5, 0, 0), "proj: ellipsoid flattening -0.1 is outside [0, 1)"},
		{laea(WGS84, 95, 0, 0, 0), "proj: laea: latitude of centre 95 is outside [-90, 90] degrees"},
		{laea(WGS84, 0, nan, 0, 0), "proj: laea: longitude of centre NaN is outside [-180, 180] degrees"},
		{laea(WGS84, 0, 0, nan, 0), "proj: laea: false easting NaN is not a finite number"},
		{laea(Sphere(inf), 0, 0, 0, 0), "proj: ellipsoid semi-major axis +Inf is not a positive finite length"},
	} {
		if c.err == nil || c.err.Error() != c.want {
			t.Errorf("got %v, want %s", c.err, c.want)
		}
	}
	// Tangent cones and polar centres are fine.
	if err := albers(WGS84, 50, 10, 50, 50, 0, 0); err != nil {
		t.Error(err)
	}
	if err := laea(WGS84, -90, 180, 0, 0); err != nil {
		t.Error(err)
	}
}

// MercatorY, MercatorPhi and MercatorYSin on the IOGP Guidance Note 7-2
// worked example for method 1024 (Popular Visualisation Pseudo Mercator):
// φ = 0.425542460 rad → N = 2 800 000.00 m; N = 2 810 000.00 m →
// φ = 0.426970023 rad; R = 6 378 137 m. The square world's edge
// atan(sinh π) maps to π (CHECKS.md, computed).
func TestMercatorFormulasIOGPExample(t *testing.T) {
	phi := dms(24, 22, 54.433) * deg
	near(t, "R·MercatorY", WebRadius*MercatorY(phi), 2800000.00, 0.01)
	near(t, "R·MercatorYSin", WebRadius*MercatorYSin(math.Sin(phi)), 2800000.00, 0.01)
	near(t, "MercatorPhi", MercatorPhi(2810000.00/WebRadius), 0.426970023, 5e-10)
	near(t, "MercatorY(max lat)", MercatorY(WebMercatorMaxLat*deg), math.Pi, 1e-13)
	near(t, "MercatorYSin(max lat)", MercatorYSin(math.Sin(WebMercatorMaxLat*deg)), math.Pi, 1e-13)
}

// MercatorYSin against the tan/log form and against math.Atanh, every
// 0.001° from −89.999° to 89.999°; and MercatorPhi undoing both. The bound
// follows from conditioning: rounding sin φ (half an ulp, 1.1e-16 relative)
// moves atanh(s) by up to 1.1e-16·dy/ds = 1.1e-16·sec²φ, so near the poles
// the sin form is worth fewer digits than the tan form (1e-8 at 89.999°,
// 1e-14 at the square world's edge); allow 4× that plus 4 ulps of y.
func TestMercatorYSinMatchesTanForm(t *testing.T) {
	worst, worstAtanh := 0.0, 0.0
	for k := -89999; k <= 89999; k++ {
		lat := float64(k) / 1000
		phi := lat * deg
		yt := MercatorY(phi)
		ys := MercatorYSin(math.Sin(phi))
		c := math.Cos(phi)
		tol := 4 * (1.1e-16/(c*c) + 2.2e-16*math.Max(1, math.Abs(yt)))
		if d := math.Abs(ys - yt); !(d <= tol) {
			t.Fatalf("lat %.3f: MercatorYSin %.17g, tan form %.17g (off %.3g, tol %.3g)", lat, ys, yt, d, tol)
		} else {
			worst = math.Max(worst, d/tol)
		}
		if d := math.Abs(ys - math.Atanh(math.Sin(phi))); !(d <= tol) {
			t.Fatalf("lat %.3f: MercatorYSin %.17g, atanh %.17g", lat, ys, math.Atanh(math.Sin(phi)))
		} else {
			worstAtanh = math.Max(worstAtanh, d/tol)
		}
		if back := MercatorPhi(ys) / deg; !(math.Abs(back-lat) <= 1e-9) {
			t.Fatalf("lat %.3f: MercatorPhi(MercatorYSin) = %.12f", lat, back)
		}
	}
	t.Logf("worst difference / tolerance: tan form %.3f, atanh %.3f", worst, worstAtanh)
	for _, s := range []float64{1, -1} {
		if y := MercatorYSin(s); !math.IsInf(y, int(s)) {
			t.Errorf("MercatorYSin(%v) = %v; want %v·Inf", s, y, s)
		}
	}
}
