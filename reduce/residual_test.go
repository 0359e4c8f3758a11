package reduce

import (
	"errors"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// The default critical value is the two-sided 0.1 % point of the standard
// normal distribution: P(|w| > 3.2905) = erfc(3.2905/√2) = 0.001.
func TestDefaultCriticalValue(t *testing.T) {
	assert.InDeltaf(t, 0.001, math.Erfc(DefaultCriticalValue/math.Sqrt2), 1e-15, "two-sided tail probability")
}

func TestCompareDistance(t *testing.T) {
	tol := DistanceSpec{Constant: 5 * mm, PPM: 5, Rule: Linear, Level: Percent95}
	test := Test{Critical: DefaultCriticalValue, Tolerance: tol}
	r, err := CompareDistance(2000.0123, 2000.0000, 3*mm, test)
	require.NoError(t, err)
	assert.InDeltaf(t, 12.3, r.MM, 1e-6, "residual (mm)")
	assert.InDeltaf(t, 6.15, r.PPM, 1e-6, "residual (ppm)")
	assert.InDeltaf(t, 4.1, r.Standardized, 1e-6, "w")
	assert.True(t, r.Outlier, "w = 4.1 > 3.29")
	assert.InDeltaf(t, 15*mm, r.Tolerance, 1e-12, "tolerance 5 mm + 5 ppm at 2 km (m)")
	assert.False(t, r.OutOfTolerance, "12.3 mm within 15 mm")

	r, err = CompareDistance(1999.9800, 2000.0000, 10*mm, test)
	require.NoError(t, err)
	assert.False(t, r.Outlier, "w = −2")
	assert.True(t, r.OutOfTolerance, "−20 mm beyond 15 mm")

	var ie *InputError
	_, err = CompareDistance(100, 100, 1*mm, Test{})
	assert.True(t, errors.As(err, &ie), "the zero Test is refused")
	_, err = CompareDistance(100, 100, 0, test)
	assert.True(t, errors.As(err, &ie), "zero sigma")
	_, err = CompareDistance(math.NaN(), 100, 1*mm, test)
	assert.True(t, errors.As(err, &ie), "NaN distance")
}

// Accuracy classes (REFERENCES.md §6; the table values are [memory]).
func TestAccuracyClasses(t *testing.T) {
	cases := []struct {
		name string
		d    float64 // m
		want float64 // tolerance, m
	}{
		// FGCC 1984 second-order class I: 1:50 000, 0.2 m on 10 km [memory]
		{"fgcc-1984/second-order-i", 10000, 0.2},
		{"FGCC-1984/First-Order", 10000, 0.1},
		// FGCC 1988/89 GPS order B: sqrt(0.8² + (0.1·10·1)²) cm = 1.2806 cm on 10 km [memory]
		{"fgcc-gps-1989/b", 10000, 0.012806},
		// FGDC-STD-007.2-1998: 2-centimeter class is 2 cm at any length [memory]
		{"fgdc-1998/2-centimeter", 3000, 0.02},
	}
	for _, c := range cases {
		cl, err := AccuracyClassNamed(c.name)
		require.NoErrorf(t, err, "%s", c.name)
		got, err := cl.Spec.At(c.d)
		require.NoErrorf(t, err, "%s", c.name)
		assert.InDeltaf(t, c.want, got, 0.001*mm, "%s at %g m (m)", c.name, c.d)
		assert.Containsf(t, cl.Source, "[memory]", "%s: source says it is recalled", c.name)
	}
	_, err := AccuracyClassNamed("first order")
	var ue *UnknownClassError
	require.True(t, errors.As(err, &ue))
	assert.Contains(t, err.Error(), "fgcc-1984/first-order")
}
