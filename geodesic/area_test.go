package geodesic

import (
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// The area of use of a CRS opened by its EPSG code is proj.db's bounding
// box, as projinfo prints it (../testdata/geodesic/areas_projinfo.txt,
// PROJ 9.1.1); a CRS given as a PROJ string has none.
func TestAreaOfUseAgainstProjinfo(t *testing.T) {
	for _, r := range readTable(t, "areas_projinfo.txt") {
		c, err := OpenCRS("EPSG:" + r.fields[0])
		require.NoError(t, err, "line %d", r.line)
		a := c.AreaOfUse()
		require.True(t, a.Known, "EPSG:%s", r.fields[0])
		assert.InDelta(t, r.float(t, 1), a.South, 1e-9, "EPSG:%s south", r.fields[0])
		assert.InDelta(t, r.float(t, 2), a.West, 1e-9, "EPSG:%s west", r.fields[0])
		assert.InDelta(t, r.float(t, 3), a.North, 1e-9, "EPSG:%s north", r.fields[0])
		assert.InDelta(t, r.float(t, 4), a.East, 1e-9, "EPSG:%s east", r.fields[0])
	}
	c, err := OpenCRS("+proj=utm +zone=32 +ellps=GRS80")
	require.NoError(t, err)
	assert.False(t, c.AreaOfUse().Known)
}
