package reduce

import (
	"errors"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func TestMarkHeights(t *testing.T) {
	// h = H + N (REFERENCES.md §2; DESIGN.md §4)
	m, err := HeightFromOrthometric(DatumEllipsoid, 250.000, Separation{N: -31.609, Source: SeparationGrid})
	require.NoError(t, err)
	assert.InDeltaf(t, 218.391, m.Height, 1e-9, "h = H + N (m)")
	assert.Equal(t, "geoid grid", m.Separation.Source.String())

	s, err := HeightFromOrthometric(DatumSeaLevel, 250.000, Separation{N: -31.609, Source: SeparationConstant})
	require.NoError(t, err)
	assert.InDeltaf(t, 250.000, s.Height, 1e-9, "sea-level mode reduces with H (m)")
	assert.Equal(t, "sea level (legacy)", s.Datum.String())

	e, err := HeightFromEllipsoidal(DatumSeaLevel, 218.391, Separation{N: -31.609, Source: SeparationPoint})
	require.NoError(t, err)
	assert.InDeltaf(t, 250.000, e.Height, 1e-9, "H = h − N in sea-level mode (m)")

	var ie *InputError
	_, err = HeightFromOrthometric(0, 100, Separation{})
	assert.True(t, errors.As(err, &ie), "the zero Datum is refused")
	_, err = HeightFromOrthometric(DatumEllipsoid, math.NaN(), Separation{})
	assert.True(t, errors.As(err, &ie), "NaN height")
	_, err = HeightFromOrthometric(DatumEllipsoid, 100, Separation{N: 500, Source: SeparationConstant})
	assert.True(t, errors.As(err, &ie), "separation of 500 m")
}

func TestLineHeights(t *testing.T) {
	a, _ := HeightFromEllipsoidal(DatumEllipsoid, 100, Separation{})
	b, _ := HeightFromEllipsoidal(DatumEllipsoid, 140, Separation{})
	h, err := NewLineHeights(a, b, 1.55, 1.70)
	require.NoError(t, err)
	assert.InDeltaf(t, 101.55, h.HeightA, 1e-12, "instrument axis (m)")
	assert.InDeltaf(t, 141.70, h.HeightB, 1e-12, "reflector (m)")
	assert.InDeltaf(t, 120, h.MeanMarkHeight, 1e-12, "mean mark height (m)")

	s, _ := HeightFromOrthometric(DatumSeaLevel, 140, Separation{})
	_, err = NewLineHeights(a, s, 1.55, 1.70)
	var ie *InputError
	assert.True(t, errors.As(err, &ie), "mixed datums are refused")
	_, err = NewLineHeights(MarkHeight{}, b, 1.55, 1.70)
	assert.True(t, errors.As(err, &ie), "unknown instrument mark is refused")
}

// The legacy sea-level reduction differs from the ellipsoidal one by about
// s·N/R: 4.7 ppm for N = −30 m (REFERENCES.md §2).
func TestSeaLevelVersusEllipsoid(t *testing.T) {
	const n = -30.0
	sep := Separation{N: n, Source: SeparationConstant}
	aE, _ := HeightFromOrthometric(DatumEllipsoid, 200, sep)
	bE, _ := HeightFromOrthometric(DatumEllipsoid, 260, sep)
	aS, _ := HeightFromOrthometric(DatumSeaLevel, 200, sep)
	bS, _ := HeightFromOrthometric(DatumSeaLevel, 260, sep)
	l := sphereLine{R: meanRadius, s: 8000, hA: aE.Height, hB: bE.Height}
	S := l.slope()
	ge, err := EllipsoidDistance(S, aE.Height, bE.Height, Section{Radius: meanRadius})
	require.NoError(t, err)
	gs, err := EllipsoidDistance(S, aS.Height, bS.Height, Section{Radius: meanRadius})
	require.NoError(t, err)
	// with N < 0 the marks stand 30 m higher above the geoid than above the
	// ellipsoid, so the sea-level distance is the shorter
	assert.InDeltaf(t, -4.7, (gs.Arc-ge.Arc)/ge.Arc/ppm, 0.05, "sea level vs ellipsoid for N = −30 m (ppm)")
}
