#!/bin/sh
# Regenerates the WKT test files from Debian gdal-bin 3.6.2 (gdalsrsinfo,
# ogr2ogr, ogrinfo). Run from this directory: sh gen.sh
set -e
for code in 4326 4269 4258 3857 5070 3577 3035 3573 6931; do
	gdalsrsinfo -o wkt1 EPSG:$code >epsg$code.wkt1.wkt
	gdalsrsinfo -o wkt_esri EPSG:$code >epsg$code.esri.prj
	gdalsrsinfo -o wkt2_2019 EPSG:$code >epsg$code.wkt2.wkt
done
# Deprecated codes, as old files still carry them.
OSR_USE_NON_DEPRECATED=NO gdalsrsinfo -o wkt1 EPSG:2163 >epsg2163.wkt1.wkt
OSR_USE_NON_DEPRECATED=NO gdalsrsinfo -o wkt2_2019 EPSG:2163 >epsg2163.wkt2.wkt
OSR_USE_NON_DEPRECATED=NO gdalsrsinfo -o wkt1 EPSG:3785 >epsg3785.wkt1.wkt
gdalsrsinfo -o wkt1 EPSG:900913 >epsg900913.wkt1.wkt
gdalsrsinfo -o wkt_esri ESRI:102003 >esri102003.esri.prj
gdalsrsinfo -o wkt1 ESRI:102003 >esri102003.wkt1.wkt
gdalsrsinfo -o wkt_esri ESRI:102113 >esri102113.esri.prj
# Coordinate systems stipple does not support.
for code in 9311 4267 32633 27700 3395 2227 3031; do
	gdalsrsinfo -o wkt1 EPSG:$code >unsupported_epsg$code.wkt1.wkt
done
gdalsrsinfo -o wkt_esri EPSG:32633 >unsupported_epsg32633.esri.prj
gdalsrsinfo -o wkt2_2019 EPSG:3395 >unsupported_epsg3395.wkt2.wkt
# What a GeoPackage holds in gpkg_spatial_ref_sys.definition, as ogr2ogr
# writes it (GDAL 3.6 does not write the WKT2 column definition_12_063;
# the .wkt2.wkt files above stand in for it).
tmp=$(mktemp -d)
echo '{"type":"FeatureCollection","features":[{"type":"Feature","properties":{},"geometry":{"type":"Point","coordinates":[0,0]}}]}' >$tmp/p.geojson
for code in 5070 3035; do
	ogr2ogr -f GPKG -a_srs EPSG:$code $tmp/e$code.gpkg $tmp/p.geojson
	ogrinfo -q -sql "SELECT definition FROM gpkg_spatial_ref_sys WHERE srs_id = $code" $tmp/e$code.gpkg |
		sed -n 's/^ *definition (String) = //p' >gpkg_epsg$code.definition.wkt
done
rm -r $tmp
# Hand-made (invented CRS): EPSG:5070 with the US survey foot as unit and
# a false origin of 1 000 000 ft E, 500 000 ft N.
sed -e 's/PARAMETER\["false_easting",0\]/PARAMETER["false_easting",1000000]/' \
	-e 's/PARAMETER\["false_northing",0\]/PARAMETER["false_northing",500000]/' \
	-e 's/UNIT\["metre",1,/UNIT["US survey foot",0.304800609601219,/' \
	-e 's/AUTHORITY\["EPSG","9001"\]/AUTHORITY["EPSG","9003"]/' \
	-e 's/"NAD83 \/ Conus Albers"/"Invented Albers (ftUS)"/' \
	-e '/AUTHORITY\["EPSG","5070"\]/d' epsg5070.wkt1.wkt |
	sed -e 's/AXIS\["Northing",NORTH\],/AXIS["Northing",NORTH]]/' >handmade_albers_usft.wkt1.wkt
sed -e 's/PARAMETER\["False_Easting",0.0\]/PARAMETER["False_Easting",1000000.0]/' \
	-e 's/PARAMETER\["False_Northing",0.0\]/PARAMETER["False_Northing",500000.0]/' \
	-e 's/UNIT\["Meter",1.0\]/UNIT["Foot_US",0.3048006096012192]/' \
	-e 's/NAD_1983_Contiguous_USA_Albers/Invented_Albers_Feet/' epsg5070.esri.prj >handmade_albers_usft.esri.prj
