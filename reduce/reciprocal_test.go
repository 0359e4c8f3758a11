package reduce

import (
	"errors"
	"math"
	"testing"

	"github.com/golang/geo/s1"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// Reciprocal zenith angles from exact sphere lines give back k and the
// height difference.
func TestReciprocalRecoversExactSphereLines(t *testing.T) {
	rng := newRand(t)
	for i := 0; i < 5000; i++ {
		l := randomLine(rng, 100, 30000)
		z12, z21 := l.observedZenith()
		r, err := Reciprocal(l.slope(), z12, z21, l.hA, l.R)
		require.NoErrorf(t, err, "line %+v", l)
		assert.InDeltaf(t, l.hB-l.hA, r.HeightDifference, 0.01*mm, "Δh of %+v (m)", l)
		// k is known to the angles' digits: k = 2R sin δ/(S sin ζ), and
		// S sin ζ is about the horizontal distance s, so an error of a few
		// 1e-16 rad in δ is 2R/s times that in k.
		assert.InDeltaf(t, l.k, r.K, 4e-15*2*l.R/l.s, "k of %+v", l)
		if t.Failed() {
			return
		}
	}
}

// The textbook forms (REFERENCES.md §2) agree with the rigorous ones on a
// near-horizontal line: 5 km, 1000 m high, 50 m rise, k = 0.13.
func TestReciprocalApprox(t *testing.T) {
	l := sphereLine{R: meanRadius, s: 5000, hA: 1000, hB: 1050, k: 0.13}
	z12, z21 := l.observedZenith()
	r, err := Reciprocal(l.slope(), z12, z21, l.hA, l.R)
	require.NoError(t, err)
	k, dh := ReciprocalApprox(l.slope(), l.s, z12, z21, l.R)
	assert.InDeltaf(t, r.K, k, 1e-3, "textbook k vs rigorous")
	assert.InDeltaf(t, r.HeightDifference, dh, 1*mm, "textbook Δh vs rigorous (m)")
	assert.InDeltaf(t, 50, r.HeightDifference, 1e-6*mm, "rigorous Δh (m)")
}

func TestReciprocalRejects(t *testing.T) {
	var ie *InputError
	_, err := Reciprocal(1000, 200*s1.Degree, 90*s1.Degree, 0, meanRadius)
	assert.True(t, errors.As(err, &ie), "zenith 200°")
	_, err = Reciprocal(math.NaN(), 90*s1.Degree, 90*s1.Degree, 0, meanRadius)
	assert.True(t, errors.As(err, &ie), "NaN slope")
	// both ends read 80°: the angles sum 20° short of π, far from any ray
	_, err = Reciprocal(1000, 80*s1.Degree, 80*s1.Degree, 0, meanRadius)
	assert.True(t, errors.As(err, &ie), "impossible pair of zenith angles")
}
