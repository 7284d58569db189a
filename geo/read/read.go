package read

import (
	"fmt"
	"math"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/geo/geojson"
	"github.com/stipple-maps/stipple/geo/gpkg"
	"github.com/stipple-maps/stipple/geo/proj"
	"github.com/stipple-maps/stipple/geo/shapefile"
)

// Options control reading.
type Options struct {
	// IDField names the attribute that identifies an area.
	IDField string
	// Layer picks a GeoPackage layer when the file has several.
	Layer string
	// PointsAndLines also reads point and line geometries (into
	// Feature.Points and Feature.Lines), for reference layers. GeoJSON
	// files only: a Shapefile or GeoPackage of points or lines is an
	// error that says to convert it.
	PointsAndLines bool
}

// Result is a layer in lon/lat with what was found on the way.
type Result struct {
	Layer *geo.Layer
	// Format is "GeoJSON", "ESRI Shapefile" or "GeoPackage".
	Format string
	// CRS is the coordinate system the file declared, as recognised;
	// its Name is "" when none was declared.
	CRS proj.CRS
	// Notes are repairs and warnings, one line each, naming the feature.
	Notes []string
	// Counts of what the repairs did.
	Repairs Repairs
}

// Repairs counts geometry repairs.
type Repairs struct {
	ClosedRings, DroppedPoints, DroppedRings, SelfIntersecting, Antimeridian, EmptyFeatures int
	// PolarRings counts rings that went round a pole and were closed along
	// the pole line (see the note for the area moved).
	PolarRings int
	// FullBands counts rings with edges from −180° to 180° along a
	// parallel, drawn as the full band round the globe.
	FullBands int
}

// Formats lists the file extensions File reads.
var Formats = map[string]string{".geojson": "GeoJSON", ".json": "GeoJSON", ".shp": "ESRI Shapefile", ".gpkg": "GeoPackage"}

// File reads the polygon file at path.
func File(path string, opt Options) (*Result, error) {
	ext := strings.ToLower(filepath.Ext(path))
	res := &Result{Format: Formats[ext]}
	var err error
	switch ext {
	case ".geojson", ".json":
		res.Layer, err = geojson.Read(path, geojson.Options{IDField: opt.IDField, PointsAndLines: opt.PointsAndLines})
	case ".shp":
		var ws []shapefile.Warning
		res.Layer, ws, err = shapefile.ReadAll(path, shapefile.Options{IDField: opt.IDField})
		for _, w := range ws {
			res.Notes = append(res.Notes, w.String())
		}
	case ".gpkg":
		res.Layer, err = gpkg.Read(path, gpkg.Options{Layer: opt.Layer, IDField: opt.IDField})
	default:
		return nil, fmt.Errorf("read: %s: unknown file type %q; stipple reads .geojson, .json, .shp and .gpkg", path, filepath.Ext(path))
	}
	if err != nil {
		if opt.PointsAndLines && ext != ".geojson" && ext != ".json" {
			return nil, fmt.Errorf("%w (points and lines are read from GeoJSON: convert the file, e.g. ogr2ogr -f GeoJSON out.geojson %s)", err, filepath.Base(path))
		}
		return nil, err
	}
	if err := toLonLat(res); err != nil {
		return nil, err
	}
	Repair(res)
	return res, nil
}

func toLonLat(res *Result) error {
	l := res.Layer
	def := strings.TrimSpace(l.CRS)
	if def == "" {
		return checkLonLat(l)
	}
	var crs proj.CRS
	var err error
	if code, ok := strings.CutPrefix(strings.ToUpper(def), "EPSG:"); ok {
		n, perr := strconv.Atoi(code)
		if perr != nil {
			return fmt.Errorf("read: %s: coordinate system %q is not an EPSG code", l.Path, def)
		}
		crs, err = proj.FromEPSG(n)
	} else {
		crs, err = proj.ParseWKT(def)
	}
	if err != nil {
		return fmt.Errorf("read: %s: %v", l.Path, err)
	}
	res.CRS = crs
	if crs.Geographic {
		return checkLonLat(l)
	}
	for i := range l.Features {
		f := &l.Features[i]
		if err := eachPoint(f, func(p *orb.Point) error {
			lon, lat := crs.ToLonLat(p[0], p[1])
			if math.IsNaN(lon) || math.IsNaN(lat) {
				return &geo.Error{Path: l.Path, Index: f.Index, ID: f.ID, Field: "geometry",
					Message: fmt.Sprintf("point (%g, %g) is outside the area %s can convert", p[0], p[1], crs.Name)}
			}
			*p = orb.Point{lon, lat}
			return nil
		}); err != nil {
			return err
		}
	}
	return nil
}

// eachPoint calls fn on every vertex of f: its polygons, points and lines.
func eachPoint(f *geo.Feature, fn func(*orb.Point) error) error {
	for _, poly := range f.Geometry {
		for _, ring := range poly {
			for k := range ring {
				if err := fn(&ring[k]); err != nil {
					return err
				}
			}
		}
	}
	for k := range f.Points {
		if err := fn(&f.Points[k]); err != nil {
			return err
		}
	}
	for _, line := range f.Lines {
		for k := range line {
			if err := fn(&line[k]); err != nil {
				return err
			}
		}
	}
	return nil
}

func checkLonLat(l *geo.Layer) error {
	for i := range l.Features {
		f := &l.Features[i]
		if err := eachPoint(f, func(p *orb.Point) error {
			if math.Abs(p[0]) > 180.0000001 || math.Abs(p[1]) > 90.0000001 {
				return &geo.Error{Path: l.Path, Index: f.Index, ID: f.ID, Field: "geometry",
					Message: fmt.Sprintf("coordinates look projected: (%g, %g) is not longitude/latitude, and the file names no coordinate system; add a .prj or convert it, e.g. ogr2ogr -t_srs EPSG:4326 out.gpkg in", p[0], p[1])}
			}
			return nil
		}); err != nil {
			return err
		}
	}
	return nil
}
