package proj

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
	"unicode"
)

// CRS is a coordinate reference system recognised from a WKT string or an
// EPSG code.
//
// Geographic CRSs on WGS 84, NAD83 (EPSG:4269), ETRS89 (EPSG:4258), GDA94
// (EPSG:4283) or GDA2020 (EPSG:7844) are all taken as WGS 84, and so are
// the geographic bases of the projected CRSs below: the datum shift is
// ignored. From memory, not measured here: NAD83 and WGS 84 differ by
// about 1–2 m, ETRS89 by under 1 m today (it moves with the Eurasian
// plate, about 2.5 cm a year from WGS 84), GDA94 by about 1.5–2 m today
// (the Australian plate moves about 7 cm a year) and GDA2020 by well under
// 1 m; for dots placed in census areas that is below a pixel at
// neighbourhood scale. Projections on a sphere whose datum is "not
// specified" (EPSG:2163's Clarke 1866 authalic sphere) read their
// longitudes and latitudes as WGS 84 ones, as PROJ's ballpark
// transformation does. Other datums (NAD27, OSGB36, ...) shift by tens or
// hundreds of metres and are rejected.
type CRS struct {
	// Name is the CRS name as the WKT or the EPSG register gives it.
	Name string
	// EPSG is the code the WKT names for itself (AUTHORITY or ID), or the
	// code given to FromEPSG; 0 when unknown.
	EPSG int
	// Geographic is true for longitude/latitude CRSs.
	Geographic bool
	// Datum is the datum, by its short name ("WGS 84", "NAD83", "ETRS89",
	// "GDA94", "GDA2020") or as written for an unspecified sphere.
	Datum string
	// Projection maps WGS 84 degrees to metres; nil if Geographic.
	Projection Projection
	// Unit is the linear unit of projected coordinates ("metre", "US
	// survey foot"); "degree" for a geographic CRS.
	Unit string
	// UnitMetres is the length of Unit in metres (0.3048006096012192 for
	// the US survey foot); 0 for a geographic CRS.
	UnitMetres float64
}

// ToLonLat converts coordinates of the CRS (in its own unit) to WGS 84
// longitude and latitude in degrees. A geographic CRS returns x, y as
// they are: files store longitude first whatever the axis order the CRS
// declares (as GDAL writes Shapefile and GeoPackage).
func (c CRS) ToLonLat(x, y float64) (lon, lat float64) {
	if c.Geographic || c.Projection == nil {
		return x, y
	}
	return c.Projection.Inverse(x*c.UnitMetres, y*c.UnitMetres)
}

// FromLonLat converts WGS 84 longitude and latitude in degrees to
// coordinates of the CRS in its own unit.
func (c CRS) FromLonLat(lon, lat float64) (x, y float64) {
	if c.Geographic || c.Projection == nil {
		return lon, lat
	}
	x, y = c.Projection.Forward(lon, lat)
	return x / c.UnitMetres, y / c.UnitMetres
}

// String describes the CRS in one line, e.g.
// `"NAD83 / Conus Albers" (EPSG:5070): +proj=aea ...`.
func (c CRS) String() string {
	s := strconv.Quote(c.Name)
	if c.EPSG != 0 {
		s += " (EPSG:" + strconv.Itoa(c.EPSG) + ")"
	}
	if c.Geographic {
		return s + ": longitude/latitude on " + c.Datum
	}
	p := "<nil>"
	if c.Projection != nil {
		p = c.Projection.String()
	}
	if c.UnitMetres != 1 {
		p += " (unit " + c.Unit + " = " + num(c.UnitMetres) + " m)"
	}
	return s + ": " + p
}

// UnsupportedError reports a coordinate system stipple cannot convert.
type UnsupportedError struct {
	Name string // the CRS name, or "EPSG:n"
	What string // the part that is not supported, e.g. PROJECTION["Transverse_Mercator"]
}

// Error returns the one-line message with the advice to reproject.
func (e *UnsupportedError) Error() string {
	return fmt.Sprintf("proj: unsupported coordinate system %q (%s); reproject to EPSG:4326 first, e.g. ogr2ogr -t_srs EPSG:4326 out.gpkg in.shp", e.Name, e.What)
}

// ParseWKT recognises a CRS from WKT: ESRI WKT1 (.prj files), OGC WKT1
// and WKT2 (2015 or 2019; as in GeoPackage's gpkg_spatial_ref_sys
// definition and definition_12_063 columns). It accepts geographic CRSs
// and projected ones using Web Mercator, Albers Equal-Area Conic or
// Lambert Azimuthal Equal-Area, on the datums CRS describes; the
// projection's parameters, ellipsoid and linear unit are read from the
// WKT itself. A compound CRS gives its horizontal part, a bound CRS its
// source CRS. Axis order declarations are ignored (see ToLonLat).
//
// Anything else gives an *UnsupportedError; malformed WKT a plain error
// naming the byte offset.
func ParseWKT(wkt string) (CRS, error) {
	root, err := parseWKTTree(wkt)
	if err != nil {
		return CRS{}, err
	}
	return crsFromNode(root, 0)
}

// Keywords of horizontal CRS nodes.
var (
	geogKeywords = []string{"GEOGCS", "GEOGCRS", "GEOGRAPHICCRS", "GEODCRS", "GEODETICCRS", "BASEGEOGCRS", "BASEGEODCRS"}
	projKeywords = []string{"PROJCS", "PROJCRS", "PROJECTEDCRS"}
)

func crsFromNode(n *wktNode, depth int) (CRS, error) {
	if depth > 2 {
		return CRS{}, errors.New("proj: WKT: compound or bound CRS nested too deeply")
	}
	switch n.kw {
	case "COMPD_CS", "COMPOUNDCRS":
		h := n.child(append(append([]string{}, projKeywords...), geogKeywords...)...)
		if h == nil {
			return CRS{}, &UnsupportedError{Name: n.name(), What: n.kw + " without a horizontal part"}
		}
		return crsFromNode(h, depth+1)
	case "BOUNDCRS":
		src := n.child("SOURCECRS")
		if src == nil || len(src.args) == 0 || src.args[0].kind != 'o' {
			return CRS{}, errors.New("proj: WKT: BOUNDCRS without SOURCECRS[...]")
		}
		return crsFromNode(src.args[0].node, depth+1)
	case "PROJCS", "PROJCRS", "PROJECTEDCRS":
		return projectedCRS(n)
	case "GEOGCS", "GEOGCRS", "GEOGRAPHICCRS", "GEODCRS", "GEODETICCRS":
		g, err := readGeog(n, n.name())
		if err != nil {
			return CRS{}, err
		}
		if cs := n.child("CS"); cs != nil && len(cs.args) > 0 && !strings.EqualFold(cs.args[0].str, "ellipsoidal") {
			return CRS{}, &UnsupportedError{Name: n.name(), What: "CS[" + cs.args[0].str + "]"}
		}
		if math.Abs(g.angle/deg-1) > 1e-9 {
			return CRS{}, &UnsupportedError{Name: n.name(), What: fmt.Sprintf("angle unit %q", g.angleName)}
		}
		return CRS{Name: n.name(), EPSG: authority(n), Geographic: true, Datum: g.datum, Unit: "degree"}, nil
	}
	return CRS{}, &UnsupportedError{Name: n.name(), What: n.kw + "[...]"}
}

// geog is what the geographic part of a CRS says.
type geog struct {
	datum     string
	ell       Ellipsoid
	angle     float64 // radians per angle unit
	angleName string
}

// readGeog reads the datum, ellipsoid, prime meridian and angle unit of a
// geographic CRS node; crsName names the whole CRS in errors.
func readGeog(g *wktNode, crsName string) (geog, error) {
	out := geog{angle: deg, angleName: "degree"}
	d := g.child("DATUM", "GEODETICDATUM", "TRF", "ENSEMBLE")
	if d == nil {
		return out, fmt.Errorf("proj: WKT: %s has no DATUM[...]", g.head())
	}
	el := d.child("SPHEROID", "ELLIPSOID")
	if el == nil {
		return out, fmt.Errorf("proj: WKT: %s has no SPHEROID[...] or ELLIPSOID[...]", d.head())
	}
	a, ok1 := el.number(1)
	rf, ok2 := el.number(2)
	if !ok1 || !ok2 {
		return out, fmt.Errorf("proj: WKT: %s needs a semi-major axis and an inverse flattening", el.head())
	}
	if u := el.child("LENGTHUNIT", "UNIT"); u != nil {
		f, _ := u.number(1)
		a *= f
	}
	out.ell = Ellipsoid{A: a}
	if rf != 0 {
		if !(rf > 1) {
			return out, fmt.Errorf("proj: WKT: %s: inverse flattening %v is not above 1", el.head(), rf)
		}
		out.ell.F = 1 / rf
	}
	if err := out.ell.validate(); err != nil {
		return out, fmt.Errorf("proj: WKT: %s: %v", el.head(), strings.TrimPrefix(err.Error(), "proj: "))
	}
	// Reuse the package's values, so that String() names +ellps=.
	for _, known := range []Ellipsoid{WGS84, GRS80, Clarke1866, International1924} {
		if math.Abs(known.A-out.ell.A) < 1e-6 && math.Abs(known.F-out.ell.F) < 1e-15 {
			out.ell = known
		}
	}
	datum, ok := knownDatum(d.name(), out.ell)
	if !ok {
		return out, &UnsupportedError{Name: crsName, What: d.kw + "[" + strconv.Quote(d.name()) + "]"}
	}
	out.datum = datum
	if pm := g.child("PRIMEM", "PRIMEMERIDIAN"); pm != nil {
		if v, _ := pm.number(1); v != 0 {
			return out, &UnsupportedError{Name: crsName, What: pm.String()}
		}
	}
	// Angle unit: WKT1 UNIT, WKT2 ANGLEUNIT directly or on the axes.
	u := g.child("UNIT", "ANGLEUNIT")
	if u == nil {
		for _, ax := range g.children("AXIS") {
			if u = ax.child("ANGLEUNIT", "UNIT"); u != nil {
				break
			}
		}
	}
	if u == nil {
		if pm := g.child("PRIMEM", "PRIMEMERIDIAN"); pm != nil {
			u = pm.child("ANGLEUNIT", "UNIT")
		}
	}
	if u != nil {
		f, ok := u.number(1)
		if !ok || !(f > 0) {
			return out, fmt.Errorf("proj: WKT: %s has no positive conversion factor", u.head())
		}
		out.angle, out.angleName = snapAngle(f), u.name()
	}
	return out, nil
}

// snapAngle returns π/180 for a factor that WKT writes as degree to 15
// digits (0.0174532925199433), so that 29.5 stays 29.5.
func snapAngle(f float64) float64 {
	if math.Abs(f/deg-1) < 1e-12 {
		return deg
	}
	return f
}

// USSurveyFoot is the US survey foot in metres, 1200/3937.
const USSurveyFoot = 1200.0 / 3937

// snapLength returns the exact US survey foot for a factor WKT writes to
// 15 digits (0.304800609601219).
func snapLength(f float64) float64 {
	if math.Abs(f/USSurveyFoot-1) < 1e-12 {
		return USSurveyFoot
	}
	return f
}

// knownDatum maps a datum name in any of the WKT spellings to its short
// name, for the datums taken as WGS 84.
func knownDatum(name string, ell Ellipsoid) (string, bool) {
	k := key(name)
	for _, d := range []struct {
		short    string
		prefixes []string
	}{
		{"WGS 84", []string{"wgs1984", "dwgs1984", "wgs84", "worldgeodeticsystem1984"}},
		{"NAD83", []string{"northamericandatum1983", "dnorthamerican1983", "nad83", "nad1983"}},
		{"ETRS89", []string{"europeanterrestrialreferencesystem1989", "detrs1989", "etrs89", "etrs1989"}},
		{"GDA94", []string{"geocentricdatumofaustralia1994", "dgda1994", "gda94", "gda1994"}},
		{"GDA2020", []string{"geocentricdatumofaustralia2020", "dgda2020", "gda2020"}},
		// EPSG:3785's sphere: its longitudes and latitudes are WGS 84 ones.
		{"WGS 84", []string{"popularvisualisationdatum"}},
	} {
		for _, p := range d.prefixes {
			if strings.HasPrefix(k, p) {
				return d.short, true
			}
		}
	}
	if ell.IsSphere() && (strings.HasPrefix(k, "notspecifiedbasedon") || strings.HasPrefix(k, "dsphere")) {
		return name, true
	}
	return "", false
}

// key lower-cases s and keeps only letters and digits, so that
// "North_American_Datum_1983" and "North American Datum 1983" compare equal.
func key(s string) string {
	var b strings.Builder
	for _, r := range s {
		if unicode.IsLetter(r) || unicode.IsDigit(r) {
			b.WriteRune(unicode.ToLower(r))
		}
	}
	return b.String()
}

// authority returns the EPSG code of AUTHORITY["EPSG","n"] or ID["EPSG",n]
// directly under n, or 0.
func authority(n *wktNode) int {
	a := n.child("AUTHORITY", "ID")
	if a == nil || !strings.EqualFold(a.name(), "EPSG") || len(a.args) < 2 {
		return 0
	}
	switch v := a.args[1]; v.kind {
	case 'n':
		return int(v.num)
	case 's':
		c, _ := strconv.Atoi(v.str)
		return c
	}
	return 0
}

// Projection methods, by key(name) and by EPSG method code.
const (
	methodAlbers = iota + 1
	methodLAEA
	methodLAEASpherical
	methodWebMercator
	methodMercator // Web Mercator only on the sphere or when marked so
	methodAuxSphere
)

var methodNames = map[string]int{
	"albersconicequalarea":               methodAlbers,
	"albers":                             methodAlbers,
	"albersequalarea":                    methodAlbers,
	"albersequalareaconic":               methodAlbers,
	"lambertazimuthalequalarea":          methodLAEA,
	"lambertazimuthalequalareaspherical": methodLAEASpherical,
	"popularvisualisationpseudomercator": methodWebMercator,
	"mercatorauxiliarysphere":            methodAuxSphere,
	"mercator1sp":                        methodMercator,
	"mercatorvarianta":                   methodMercator,
	"mercator":                           methodMercator,
}

var methodCodes = map[int]int{9822: methodAlbers, 9820: methodLAEA, 1027: methodLAEASpherical, 1024: methodWebMercator, 9804: methodMercator}

// Parameters, by key(name) and by EPSG parameter code.
const (
	parLat0 = iota + 1
	parLon0
	parLat1
	parLat2
	parFE
	parFN
	parScale
	parAuxType
)

var paramNames = map[string]int{
	"latitudeofcenter": parLat0, "latitudeofcentre": parLat0, "latitudeoforigin": parLat0,
	"latitudeoffalseorigin": parLat0, "latitudeofnaturalorigin": parLat0,
	"longitudeofcenter": parLon0, "longitudeofcentre": parLon0, "centralmeridian": parLon0,
	"longitudeoffalseorigin": parLon0, "longitudeofnaturalorigin": parLon0, "longitudeoforigin": parLon0,
	"standardparallel1": parLat1, "latitudeof1ststandardparallel": parLat1,
	"standardparallel2": parLat2, "latitudeof2ndstandardparallel": parLat2,
	"falseeasting": parFE, "eastingatfalseorigin": parFE,
	"falsenorthing": parFN, "northingatfalseorigin": parFN,
	"scalefactor": parScale, "scalefactoratnaturalorigin": parScale,
	"auxiliaryspheretype": parAuxType,
}

var paramCodes = map[int]int{
	8821: parLat0, 8801: parLat0, 8822: parLon0, 8802: parLon0,
	8823: parLat1, 8824: parLat2, 8826: parFE, 8806: parFE, 8827: parFN, 8807: parFN,
	8805: parScale,
}

// webMercatorCodes are the EPSG (and ESRI) codes whose Mercator is the
// Web Mercator sphere whatever ellipsoid their WKT1 names.
var webMercatorCodes = map[int]bool{3857: true, 3785: true, 900913: true, 102100: true, 102113: true}

func projectedCRS(n *wktNode) (CRS, error) {
	name := n.name()
	bg := n.child(geogKeywords...)
	if bg == nil {
		return CRS{}, fmt.Errorf("proj: WKT: %s has no geographic base (GEOGCS[...] or BASEGEOGCRS[...])", n.head())
	}
	g, err := readGeog(bg, name)
	if err != nil {
		return CRS{}, err
	}
	crs := CRS{Name: name, EPSG: authority(n), Datum: g.datum, Unit: "metre", UnitMetres: 1}

	// Linear unit: WKT1 UNIT and WKT2 LENGTHUNIT directly under the CRS,
	// or WKT2's on the axes.
	u := n.child("UNIT", "LENGTHUNIT")
	if u == nil {
		for _, ax := range n.children("AXIS") {
			if u = ax.child("LENGTHUNIT", "UNIT"); u != nil {
				break
			}
		}
	}
	if cs := n.child("CS"); u == nil && cs != nil {
		for _, ax := range cs.children("AXIS") {
			if u = ax.child("LENGTHUNIT", "UNIT"); u != nil {
				break
			}
		}
	}
	if u != nil {
		f, ok := u.number(1)
		if !ok || !(f > 0) || math.IsInf(f, 0) {
			return CRS{}, fmt.Errorf("proj: WKT: %s has no positive conversion factor", u.head())
		}
		crs.Unit, crs.UnitMetres = u.name(), snapLength(f)
	}

	// Method: WKT1 PROJECTION directly; WKT2 METHOD inside CONVERSION.
	var method *wktNode
	params := n
	what := "PROJECTION"
	if method = n.child("PROJECTION"); method == nil {
		conv := n.child("CONVERSION", "DERIVINGCONVERSION")
		if conv != nil {
			method = conv.child("METHOD", "PROJECTION")
			params = conv
			what = "METHOD"
		}
	}
	if method == nil {
		return CRS{}, fmt.Errorf("proj: WKT: %s has no PROJECTION[...] or CONVERSION[METHOD[...]]", n.head())
	}
	what += "[" + strconv.Quote(method.name()) + "]"
	m := methodNames[key(method.name())]
	if id := method.child("ID", "AUTHORITY"); m == 0 && id != nil && strings.EqualFold(id.name(), "EPSG") {
		if c, ok := id.number(1); ok {
			m = methodCodes[int(c)]
		}
	}
	if m == 0 {
		return CRS{}, &UnsupportedError{Name: name, What: what}
	}

	// Parameters, in degrees and metres.
	vals := map[int]float64{}
	for _, p := range params.children("PARAMETER") {
		id := paramNames[key(p.name())]
		if pid := p.child("ID", "AUTHORITY"); id == 0 && pid != nil {
			if c, ok := pid.number(1); ok {
				id = paramCodes[int(c)]
			}
		}
		v, ok := p.number(1)
		if !ok {
			return CRS{}, fmt.Errorf("proj: WKT: %s has no number", p.head())
		}
		switch id {
		case 0:
			return CRS{}, &UnsupportedError{Name: name, What: what + " with " + p.String()}
		case parLat0, parLon0, parLat1, parLat2:
			f := g.angle
			if au := p.child("ANGLEUNIT", "UNIT"); au != nil {
				f, _ = au.number(1)
				if !(f > 0) {
					return CRS{}, fmt.Errorf("proj: WKT: %s has no positive conversion factor", au.head())
				}
				f = snapAngle(f)
			}
			if f != deg {
				v = v * f / deg
			}
		case parFE, parFN:
			f := crs.UnitMetres
			if lu := p.child("LENGTHUNIT", "UNIT"); lu != nil {
				f, _ = lu.number(1)
				if !(f > 0) {
					return CRS{}, fmt.Errorf("proj: WKT: %s has no positive conversion factor", lu.head())
				}
				f = snapLength(f)
			}
			v *= f
		}
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return CRS{}, fmt.Errorf("proj: WKT: %s is not a finite number", p.head())
		}
		vals[id] = v
	}
	unsupported := func(why string) (CRS, error) {
		return CRS{}, &UnsupportedError{Name: name, What: what + " " + why}
	}
	// Tolerance on zero-valued parameters: 1e-9° or 1 µm.
	zero := func(id int) bool { return math.Abs(vals[id]) < 1e-9 }
	if s, ok := vals[parScale]; ok && m != methodMercator && m != methodWebMercator && m != methodAuxSphere && math.Abs(s-1) > 1e-12 {
		return unsupported("with scale factor " + num(s))
	}
	lat0, lon0, fe, fn := vals[parLat0], vals[parLon0], vals[parFE], vals[parFN]
	wrap := func(p Projection, err error) (CRS, error) {
		if err != nil {
			return CRS{}, fmt.Errorf("%w (in %q)", err, name)
		}
		crs.Projection = p
		return crs, nil
	}
	switch m {
	case methodAlbers:
		lat1, ok1 := vals[parLat1]
		lat2, ok2 := vals[parLat2]
		if !ok1 || !ok2 {
			return CRS{}, fmt.Errorf("proj: WKT: %q: Albers needs standard_parallel_1 and standard_parallel_2", name)
		}
		return wrap(NewAlbers(g.ell, lat0, lon0, lat1, lat2, fe, fn))
	case methodLAEASpherical:
		if !g.ell.IsSphere() {
			return unsupported("on an ellipsoid")
		}
		fallthrough
	case methodLAEA:
		if _, ok := vals[parLat1]; ok {
			return unsupported("with a standard parallel")
		}
		return wrap(NewLAEA(g.ell, lat0, lon0, fe, fn))
	case methodMercator, methodWebMercator, methodAuxSphere:
		if m == methodAuxSphere && !zero(parAuxType) {
			return unsupported("with Auxiliary_Sphere_Type " + num(vals[parAuxType]))
		}
		if m == methodMercator && !isWebMercator(n, g.ell, crs.EPSG) {
			// Mercator on the ellipsoid (EPSG:3395 and the like) differs
			// from Web Mercator by up to 43 km in northing.
			return unsupported("on an ellipsoid")
		}
		if s, ok := vals[parScale]; ok && math.Abs(s-1) > 1e-12 {
			return unsupported("with scale factor " + num(s))
		}
		if !zero(parLat0) || !zero(parLat1) {
			return unsupported("with a standard parallel or origin off the equator")
		}
		if err := checkLon("web mercator: central meridian", lon0); err != nil {
			return CRS{}, fmt.Errorf("%w (in %q)", err, name)
		}
		crs.Projection = WebMercator{Lon0: lon0, FalseEasting: fe, FalseNorthing: fn}
		return crs, nil
	}
	return unsupported("")
}

// isWebMercator reports whether a WKT1 Mercator_1SP is Web Mercator: on
// the sphere of radius 6378137, or marked by its EPSG code or by GDAL's
// EXTENSION["PROJ4","+proj=merc +a=6378137 +b=6378137 ..."].
func isWebMercator(n *wktNode, ell Ellipsoid, code int) bool {
	if ell.IsSphere() && ell.A == WebRadius || webMercatorCodes[code] {
		return true
	}
	if ext := n.child("EXTENSION"); ext != nil && len(ext.args) > 1 && ext.args[1].kind == 's' {
		p := " " + ext.args[1].str + " "
		return strings.Contains(p, " +a=6378137 ") && strings.Contains(p, " +b=6378137 ")
	}
	return false
}
