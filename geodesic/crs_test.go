package geodesic

import (
	"testing"

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

func TestOpenCRSErrors(t *testing.T) {
	for _, tc := range []struct{ def, want string }{
		{"", "empty definition"},
		{"EPSG:4326", "is geographic"},
		{"EPSG:4978", "is geocentric"},
		{"EPSG:5773", "not a projected CRS"},
		{"EPSG:99999", "want EPSG:nnnn of a projected CRS known to proj.db"},
		{"+proj=longlat +ellps=GRS80", "is geographic"},
		{"not a crs", "CRS \"not a crs\""},
	} {
		_, err := OpenCRS(tc.def)
		assert.ErrorContains(t, err, tc.want, tc.def)
		if err != nil {
			assert.Contains(t, err.Error(), "projected CRS", tc.def)
		}
	}
}
