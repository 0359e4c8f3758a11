package geodesic

import (
	"testing"

	"github.com/golang/geo/s2"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// The CRS's own datum and ellipsoid come from proj.db; ellipsoid constants
// are the EPSG dataset's (Airy 1830 EPSG:7001, Clarke 1866 EPSG:7008,
// GRS 1980 EPSG:7019, WGS 84 EPSG:7030) and the US survey foot is
// 1200/3937 m (common practice; US Federal Register 1959).
func TestOpenCRS(t *testing.T) {
	for _, tc := range []struct {
		def           string
		name, datum   string
		ell           Ellipsoid
		metresPerUnit float64
		conformal     bool
	}{
		{"EPSG:32633", "WGS 84 / UTM zone 33N", "World Geodetic System 1984", WGS84, 1, true},
		{"EPSG:27700", "OSGB36 / British National Grid", "Ordnance Survey of Great Britain 1936", Airy1830, 1, true},
		{"EPSG:2278", "NAD83 / Texas South Central (ftUS)", "North American Datum 1983", GRS80, 1200.0 / 3937, true},
		{"EPSG:32040", "NAD27 / Texas South Central", "North American Datum 1927", Clarke1866, 1200.0 / 3937, true},
		{"EPSG:25833+5783", "ETRS89 / UTM zone 33N + DHHN92 height", "European Terrestrial Reference System 1989", GRS80, 1, true},
		{"+proj=tmerc +lon_0=9 +k=0.9996 +x_0=500000 +ellps=intl", "unknown", "", International1924, 1, true},
		{"EPSG:3035", "ETRS89-extended / LAEA Europe", "European Terrestrial Reference System 1989", GRS80, 1, false},
	} {
		crs, err := OpenCRS(tc.def)
		require.NoError(t, err, tc.def)
		assert.Equal(t, tc.name, crs.Name(), tc.def)
		if tc.datum != "" {
			assert.Contains(t, crs.Datum(), tc.datum, tc.def)
		}
		assert.InDeltaf(t, tc.ell.SemiMajorAxis(), crs.Ellipsoid().SemiMajorAxis(), 1e-9, "%s a, metres", tc.def)
		assert.InDeltaf(t, tc.ell.InverseFlattening(), crs.Ellipsoid().InverseFlattening(), 1e-8, "%s 1/f", tc.def)
		assert.InDeltaf(t, tc.metresPerUnit, crs.MetresPerUnit(), 1e-15, "%s metres per unit", tc.def)
		assert.Equal(t, tc.conformal, crs.Conformal(), tc.def)
		assert.Contains(t, crs.Projection(), "+units=m", tc.def)
		assert.NotContains(t, crs.Projection(), "type=crs", tc.def)
	}
}

// mixedUnitsWKT is a projected CRS (invented) whose easting is in US
// survey feet and northing in metres.
const mixedUnitsWKT = `PROJCRS["mixed units",BASEGEOGCRS["NAD83",DATUM["North American Datum 1983",ELLIPSOID["GRS 1980",6378137,298.257222101]]],` +
	`CONVERSION["tm",METHOD["Transverse Mercator",ID["EPSG",9807]],` +
	`PARAMETER["Latitude of natural origin",0,ANGLEUNIT["degree",0.0174532925199433]],` +
	`PARAMETER["Longitude of natural origin",-105,ANGLEUNIT["degree",0.0174532925199433]],` +
	`PARAMETER["Scale factor at natural origin",0.9996,SCALEUNIT["unity",1]],` +
	`PARAMETER["False easting",500000,LENGTHUNIT["metre",1]],PARAMETER["False northing",0,LENGTHUNIT["metre",1]]],` +
	`CS[Cartesian,2],AXIS["easting",east,LENGTHUNIT["US survey foot",0.304800609601219]],AXIS["northing",north,LENGTHUNIT["metre",1]]]`

func TestOpenCRSErrors(t *testing.T) {
	for _, tc := range []struct{ def, want string }{
		{"", "empty definition"},
		{"EPSG:4326", "is geographic"},
		{"EPSG:4978", "is geocentric"},
		{"EPSG:5773", "not a projected CRS"},
		{"EPSG:99999", "want EPSG:nnnn of a projected CRS known to proj.db"},
		{"+proj=longlat +ellps=GRS80", "is geographic"},
		{"not a crs", "CRS \"not a crs\""},
		{mixedUnitsWKT, "its first axis is in US survey foot (0.30480060960121924 m) but its second in metre (1 m): geored needs one unit for easting and northing"},
	} {
		_, err := OpenCRS(tc.def)
		assert.ErrorContains(t, err, tc.want, tc.def)
		if err != nil {
			assert.Contains(t, err.Error(), "projected CRS", tc.def)
		}
	}
}

// The unit's code is PROJ's where the definition has one, and empty for
// a PROJ string that gives a bare length (+to_meter=).
func TestCRSUnitCode(t *testing.T) {
	for _, tc := range []struct{ def, name, code string }{
		{"EPSG:2278", "US survey foot", "EPSG:9003"},
		{"+proj=utm +zone=13 +ellps=GRS80 +units=us-ft", "US survey foot", "EPSG:9003"},
		{"+proj=utm +zone=13 +ellps=GRS80 +units=ft", "foot", "EPSG:9002"},
		{"+proj=utm +zone=13 +ellps=GRS80 +to_meter=0.3048006", "unknown", ""},
	} {
		crs, err := OpenCRS(tc.def)
		require.NoError(t, err, tc.def)
		assert.Equal(t, tc.name, crs.Unit(), tc.def)
		assert.Equal(t, tc.code, crs.UnitCode(), tc.def)
	}
}

// State Plane grids in US survey feet and in international feet, and UTM
// grids in metres, opened by EPSG code: the CRS reports its axis unit's
// EPSG code and length, and Forward (in metres) divided by that length
// gives cs2cs's grid coordinates in the CRS's own unit to 1 mm
// (../testdata/geodesic/stateplane_cs2cs.txt, PROJ 9.1.1). The lengths
// are the units' definitions: the international foot 0.3048 m (the 1959
// agreement) and the US survey foot 1200/3937 m (the Mendenhall Order of
// 1893), EPSG units of measure 9002 and 9003 (common practice).
func TestStatePlaneGridsAgainstCS2CS(t *testing.T) {
	metresPer := map[string]float64{"9001": 1, "9002": 0.3048, "9003": 1200.0 / 3937}
	unitName := map[string]string{"9001": "metre", "9002": "foot", "9003": "US survey foot"}
	seen := map[string]bool{}
	for _, r := range readTable(t, "stateplane_cs2cs.txt") {
		def, code := "EPSG:"+r.fields[0], r.fields[2]
		seen[code] = true
		crs, err := OpenCRS(def)
		require.NoError(t, err, "line %d", r.line)
		assert.Equal(t, "EPSG:"+code, crs.UnitCode(), "line %d %s unit code", r.line, def)
		assert.Equal(t, unitName[code], crs.Unit(), "line %d %s unit name", r.line, def)
		perUnit := metresPer[code]
		require.NotZero(t, perUnit, "line %d: unit %s", r.line, code)
		// PROJ's length of the US survey foot is 1200/3937 m to within an
		// ulp or two (proj.db stores it as a ratio of two decimals).
		assert.InDeltaf(t, perUnit, crs.MetresPerUnit(), 4e-16, "line %d %s metres per unit", r.line, def)
		p, err := crs.NewProjector()
		require.NoError(t, err)
		g, err := p.Forward(s2.LatLngFromDegrees(r.float(t, 3), r.float(t, 4)))
		p.Close()
		require.NoError(t, err, "line %d", r.line)
		tol := mm / perUnit // 1 mm in the grid's unit
		assert.InDeltaf(t, r.float(t, 5), g.Easting/perUnit, tol, "line %d %s easting, %s", r.line, def, crs.Unit())
		assert.InDeltaf(t, r.float(t, 6), g.Northing/perUnit, tol, "line %d %s northing, %s", r.line, def, crs.Unit())
	}
	assert.Len(t, seen, 3, "grids in metres, international feet and US survey feet")
}
