package proj

import (
	"fmt"
	"sort"
	"strconv"
	"strings"
)

// epsgDef is a built-in CRS definition.
type epsgDef struct {
	name   string
	datum  string
	kind   byte // 'g' geographic, 'a' Albers, 'l' LAEA, 'w' Web Mercator
	ell    Ellipsoid
	params [6]float64 // Albers: lat0, lon0, lat1, lat2, fe, fn; LAEA: lat0, lon0, fe, fn
}

// epsgTable holds the codes FromEPSG knows. Parameters as PROJ 9.1's EPSG
// database gives them (gdalsrsinfo -o proj4 EPSG:n, Debian gdal-bin
// 3.6.2; TestFromEPSGMatchesGDAL checks every entry against it).
var epsgTable = map[int]epsgDef{
	4326: {name: "WGS 84", datum: "WGS 84", kind: 'g', ell: WGS84},
	4269: {name: "NAD83", datum: "NAD83", kind: 'g', ell: GRS80},
	4258: {name: "ETRS89", datum: "ETRS89", kind: 'g', ell: GRS80},
	4283: {name: "GDA94", datum: "GDA94", kind: 'g', ell: GRS80},
	7844: {name: "GDA2020", datum: "GDA2020", kind: 'g', ell: GRS80},

	3857:   {name: "WGS 84 / Pseudo-Mercator", datum: "WGS 84", kind: 'w', ell: WGS84},
	3785:   {name: "Popular Visualisation CRS / Mercator", datum: "WGS 84", kind: 'w', ell: WGS84},
	900913: {name: "Google Maps Global Mercator", datum: "WGS 84", kind: 'w', ell: WGS84},
	102100: {name: "WGS_1984_Web_Mercator_Auxiliary_Sphere", datum: "WGS 84", kind: 'w', ell: WGS84},
	102113: {name: "WGS_1984_Web_Mercator", datum: "WGS 84", kind: 'w', ell: WGS84},

	5070:   {name: "NAD83 / Conus Albers", datum: "NAD83", kind: 'a', ell: GRS80, params: [6]float64{23, -96, 29.5, 45.5, 0, 0}},
	6350:   {name: "NAD83(2011) / Conus Albers", datum: "NAD83", kind: 'a', ell: GRS80, params: [6]float64{23, -96, 29.5, 45.5, 0, 0}},
	102003: {name: "USA_Contiguous_Albers_Equal_Area_Conic", datum: "NAD83", kind: 'a', ell: GRS80, params: [6]float64{37.5, -96, 29.5, 45.5, 0, 0}},
	102008: {name: "North_America_Albers_Equal_Area_Conic", datum: "NAD83", kind: 'a', ell: GRS80, params: [6]float64{40, -96, 20, 60, 0, 0}},
	3083:   {name: "NAD83 / Texas Centric Albers Equal Area", datum: "NAD83", kind: 'a', ell: GRS80, params: [6]float64{18, -100, 27.5, 35, 1500000, 6000000}},
	3310:   {name: "NAD83 / California Albers", datum: "NAD83", kind: 'a', ell: GRS80, params: [6]float64{0, -120, 34, 40.5, 0, -4000000}},
	3577:   {name: "GDA94 / Australian Albers", datum: "GDA94", kind: 'a', ell: GRS80, params: [6]float64{0, 132, -18, -36, 0, 0}},
	9473:   {name: "GDA2020 / Australian Albers", datum: "GDA2020", kind: 'a', ell: GRS80, params: [6]float64{0, 132, -18, -36, 0, 0}},

	3035:   {name: "ETRS89-extended / LAEA Europe", datum: "ETRS89", kind: 'l', ell: GRS80, params: [6]float64{52, 10, 4321000, 3210000}},
	2163:   {name: "US National Atlas Equal Area", datum: "Not specified (based on Clarke 1866 Authalic Sphere)", kind: 'l', ell: Sphere(6370997), params: [6]float64{45, -100, 0, 0}},
	3571:   {name: "WGS 84 / North Pole LAEA Bering Sea", datum: "WGS 84", kind: 'l', ell: WGS84, params: [6]float64{90, 180, 0, 0}},
	3572:   {name: "WGS 84 / North Pole LAEA Alaska", datum: "WGS 84", kind: 'l', ell: WGS84, params: [6]float64{90, -150, 0, 0}},
	3573:   {name: "WGS 84 / North Pole LAEA Canada", datum: "WGS 84", kind: 'l', ell: WGS84, params: [6]float64{90, -100, 0, 0}},
	3574:   {name: "WGS 84 / North Pole LAEA Atlantic", datum: "WGS 84", kind: 'l', ell: WGS84, params: [6]float64{90, -40, 0, 0}},
	3575:   {name: "WGS 84 / North Pole LAEA Europe", datum: "WGS 84", kind: 'l', ell: WGS84, params: [6]float64{90, 10, 0, 0}},
	3576:   {name: "WGS 84 / North Pole LAEA Russia", datum: "WGS 84", kind: 'l', ell: WGS84, params: [6]float64{90, 90, 0, 0}},
	6931:   {name: "WGS 84 / NSIDC EASE-Grid 2.0 North", datum: "WGS 84", kind: 'l', ell: WGS84, params: [6]float64{90, 0, 0, 0}},
	6932:   {name: "WGS 84 / NSIDC EASE-Grid 2.0 South", datum: "WGS 84", kind: 'l', ell: WGS84, params: [6]float64{-90, 0, 0, 0}},
	102017: {name: "North_Pole_Lambert_Azimuthal_Equal_Area", datum: "WGS 84", kind: 'l', ell: WGS84, params: [6]float64{90, 0, 0, 0}},
	102020: {name: "South_Pole_Lambert_Azimuthal_Equal_Area", datum: "WGS 84", kind: 'l', ell: WGS84, params: [6]float64{-90, 0, 0, 0}},
}

// FromEPSG returns the CRS of an EPSG code. It knows the geographic CRSs
// 4326, 4269, 4258, 4283, 7844 (all taken as WGS 84, see CRS), Web
// Mercator (3857 and its older codes 3785, 900913), Albers CRSs (5070,
// 6350, 3083, 3310, 3577, 9473) and LAEA CRSs (3035, 2163, 3571–3576,
// 6931, 6932). ESRI codes that files often label "EPSG:" are accepted too:
// 102100 and 102113 (Web Mercator), 102003 and 102008 (Albers), 102017
// and 102020 (polar LAEA). Other codes give an *UnsupportedError.
func FromEPSG(code int) (CRS, error) {
	d, ok := epsgTable[code]
	if !ok {
		return CRS{}, &UnsupportedError{Name: "EPSG:" + strconv.Itoa(code), What: "not one of EPSG:" + knownCodes()}
	}
	c := CRS{Name: d.name, EPSG: code, Datum: d.datum, Unit: "metre", UnitMetres: 1}
	p := d.params
	var err error
	switch d.kind {
	case 'g':
		c.Geographic, c.Unit, c.UnitMetres = true, "degree", 0
	case 'w':
		c.Projection = WebMercator{}
	case 'a':
		c.Projection, err = NewAlbers(d.ell, p[0], p[1], p[2], p[3], p[4], p[5])
	case 'l':
		c.Projection, err = NewLAEA(d.ell, p[0], p[1], p[2], p[3])
	}
	if err != nil {
		return CRS{}, fmt.Errorf("proj: EPSG:%d: %w", code, err) // not reached: the table is tested
	}
	return c, nil
}

// knownCodes lists the codes of epsgTable.
func knownCodes() string {
	codes := make([]int, 0, len(epsgTable))
	for c := range epsgTable {
		codes = append(codes, c)
	}
	sort.Ints(codes)
	s := make([]string, len(codes))
	for i, c := range codes {
		s[i] = strconv.Itoa(c)
	}
	return strings.Join(s, ", ")
}
