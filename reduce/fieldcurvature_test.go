package reduce

import (
	"errors"
	"math"
	"testing"

	"github.com/golang/geo/s1"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// Forward then Inverse gives back the slope distance and zenith angle to
// 1e-12 relative, over 1 m … 20 km, zenith 45° … 135°, k of 0, 0.13 and
// 0.2, in both modes; and Inverse then Forward gives back the stored
// distances.
func TestFieldCurvatureRoundTrip(t *testing.T) {
	worstS, worstZ, worstSteps := 0.0, 0.0, 0
	for _, mode := range []FieldCurvatureMode{FieldCurvatureVertical, FieldCurvatureBoth} {
		for _, k := range []float64{0, 0.13, 0.2} {
			c := FieldCurvature{Mode: mode, K: k, Radius: DefaultFieldEarthRadius}
			require.NoError(t, c.Check())
			for _, s := range []float64{1, 3.7, 50, 499.9, 1234.5678, 5000, 9999.99, 15000, 20000} {
				for zd := 45.0; zd <= 135; zd += 7.5 {
					z := s1.Angle(zd * math.Pi / 180)
					hd, vd := c.Forward(s, z)
					s2, z2, err := c.Inverse(hd, vd)
					require.NoError(t, err, "%v k=%g S=%g z=%g°", mode, k, s, zd)
					rs, rz := math.Abs(s2-s)/s, math.Abs(float64(z2-z))/float64(z)
					worstS, worstZ = math.Max(worstS, rs), math.Max(worstZ, rz)
					assert.LessOrEqualf(t, rs, 1e-12, "%v k=%g S=%g z=%g°: S back %.15g", mode, k, s, zd, s2)
					assert.LessOrEqualf(t, rz, 1e-12, "%v k=%g S=%g z=%g°: z back %.15g°", mode, k, s, zd, z2.Degrees())
					h3, v3 := c.Forward(s2, z2)
					assert.InDeltaf(t, hd, h3, 1e-12*s, "%v k=%g S=%g z=%g°: hd again (m)", mode, k, s, zd)
					assert.InDeltaf(t, vd, v3, 1e-12*s, "%v k=%g S=%g z=%g°: vd again (m)", mode, k, s, zd)
					_, _, steps, err := c.inverse(hd, vd)
					require.NoError(t, err)
					worstSteps = max(worstSteps, steps)
				}
			}
		}
	}
	assert.LessOrEqual(t, worstSteps, 5, "Newton steps (the doc's bound)")
	t.Logf("worst relative error: S %.1e, z %.1e; most Newton steps %d", worstS, worstZ, worstSteps)
}

// The forward formulas against their textbook first-order values, worked
// by hand (common practice: the curvature and refraction correction
// (1 − k)·D²/(2R) of trigonometric heighting): at S = 1000 m, z = 90°
// (X = 0, Y = 1000 m), k = 0.13, R = 6378000 m, vd' = 0.87·1e6/12756000 =
// 0.0682032 m and hd' = 1000 m; at z = 60° the horizontal distance
// shortens by (1 − 0.065)·XY/R.
func TestFieldCurvatureForward(t *testing.T) {
	c := FieldCurvature{Mode: FieldCurvatureBoth, K: 0.13, Radius: 6378000}
	hd, vd := c.Forward(1000, s1.Angle(math.Pi/2))
	assert.InDelta(t, 1000, hd, 1e-9, "hd' at z = 90° (m)")
	assert.InDelta(t, 0.0682032, vd, 1e-7, "vd' at z = 90° (m)")
	x, y := 1000*math.Cos(math.Pi/3), 1000*math.Sin(math.Pi/3)
	hd, vd = c.Forward(1000, s1.Angle(math.Pi/3))
	assert.InDelta(t, y-0.935*x*y/6378000, hd, 1e-9, "hd' at z = 60° (m)")
	assert.InDelta(t, x+0.87*y*y/12756000, vd, 1e-9, "vd' at z = 60° (m)")
	v := FieldCurvature{Mode: FieldCurvatureVertical, K: 0.13, Radius: 6378000}
	hd, _ = v.Forward(1000, s1.Angle(math.Pi/3))
	assert.Equal(t, y, hd, "vertical: hd = S sin z")
	hd, vd = FieldCurvature{}.Forward(1000, s1.Angle(math.Pi/3))
	assert.Equal(t, [2]float64{y, x}, [2]float64{hd, vd}, "none")
	s, z, err := FieldCurvature{}.Inverse(y, x)
	require.NoError(t, err)
	assert.InDelta(t, 1000, s, 1e-12)
	assert.InDelta(t, math.Pi/3, float64(z), 1e-15)
}

func TestFieldCurvatureRefuses(t *testing.T) {
	good := FieldCurvature{Mode: FieldCurvatureBoth, K: 0.13, Radius: DefaultFieldEarthRadius}
	for name, c := range map[string]FieldCurvature{
		"k = 1":             {Mode: FieldCurvatureBoth, K: 1, Radius: DefaultFieldEarthRadius},
		"k < 0":             {Mode: FieldCurvatureVertical, K: -0.01, Radius: DefaultFieldEarthRadius},
		"k NaN":             {Mode: FieldCurvatureBoth, K: math.NaN(), Radius: DefaultFieldEarthRadius},
		"radius 6371 (km?)": {Mode: FieldCurvatureBoth, K: 0.13, Radius: 6371},
		"radius 6.5e6":      {Mode: FieldCurvatureBoth, K: 0.13, Radius: 6.5e6},
		"mode 7":            {Mode: 7, K: 0.13, Radius: DefaultFieldEarthRadius},
	} {
		var ie *InputError
		assert.True(t, errors.As(c.Check(), &ie), name)
		_, _, err := c.Inverse(100, 1)
		assert.True(t, errors.As(err, &ie), name)
	}
	for _, hv := range [][2]float64{{math.NaN(), 1}, {1, math.Inf(1)}, {good.MaxLength() * 1.01, 1}, {-1e-9, 1}, {100, -good.MaxLength() * 1.01}} {
		_, _, err := good.Inverse(hv[0], hv[1])
		var ie *InputError
		require.True(t, errors.As(err, &ie), "%v", hv)
		assert.Equal(t, fieldCurvatureStage, ie.Stage)
	}
	// At the edge of what it takes it still converges.
	_, _, steps, err := good.inverse(good.MaxLength(), good.MaxLength())
	require.NoError(t, err)
	assert.LessOrEqual(t, steps, 5)
	assert.Equal(t, "none vertical both", FieldCurvatureNone.String()+" "+FieldCurvatureVertical.String()+" "+FieldCurvatureBoth.String())
}
