package reduce

import (
	"flag"
	"math"
	"math/rand/v2"
	"testing"
	"time"

	"github.com/golang/geo/s1"
)

// Tolerances carry their unit.
const (
	mm  = 1e-3
	ppm = 1e-6
)

// meanRadius is the mean Earth radius R₁ = (2a + b)/3 of GRS80/WGS84,
// 6 371 008.8 m (Moritz, Geodetic Reference System 1980, Bulletin
// Géodésique 54, 1980), the R the trade's rules of thumb use.
const meanRadius = 6371008.8

var seedFlag = flag.Uint64("reduce.seed", 0, "seed for the random property tests (0: from the clock, printed)")

// newRand returns a seeded generator and logs the seed so a failure can be
// reproduced with -reduce.seed.
func newRand(t testing.TB) *rand.Rand {
	s := *seedFlag
	if s == 0 {
		s = uint64(time.Now().UnixNano())
	}
	t.Logf("seed %d (rerun with -reduce.seed=%d)", s, s)
	return rand.New(rand.NewPCG(s, 0x2545f4914f6cdd1d))
}

// sphereLine is an exact line on a sphere of radius R: two points on their
// normals at heights hA (instrument axis) and hB (reflector) above the
// sphere, an arc s between their foot points, and a circular ray of radius
// R/k.
type sphereLine struct {
	R, s, hA, hB, k float64
}

// slope returns the straight chord between the two points, from the
// triangle centre–A–B: S² = (hB − hA)² + 4 ρA ρB sin²(ψ/2).
func (l sphereLine) slope() float64 {
	psi := l.s / l.R
	rhoA, rhoB := l.R+l.hA, l.R+l.hB
	h := math.Sin(psi / 2)
	dh := l.hB - l.hA
	return math.Sqrt(dh*dh + 4*rhoA*rhoB*h*h)
}

// zenith returns the geometric zenith angle of the chord at A (towards B)
// and at B (towards A). In A's frame B lies at (ρB sin ψ, ρB cos ψ − ρA),
// and ρB cos ψ − ρA = Δh − 2ρB sin²(ψ/2) keeps its digits on short lines.
func (l sphereLine) zenith() (atA, atB s1.Angle) {
	psi := l.s / l.R
	rhoA, rhoB := l.R+l.hA, l.R+l.hB
	h := math.Sin(psi / 2)
	dh := l.hB - l.hA
	atA = s1.Angle(math.Atan2(rhoB*math.Sin(psi), dh-2*rhoB*h*h))
	atB = s1.Angle(math.Atan2(rhoA*math.Sin(psi), -dh-2*rhoA*h*h))
	return atA, atB
}

// observedZenith returns the zenith angles a theodolite reads along the
// ray: the geometric ones less the refraction angle δ = asin(k sin ζ S/2R),
// the angle between a chord S and a circle of curvature k sin ζ / R, ζ the
// chord's zenith angle at its midpoint (z_A − ψ/2).
func (l sphereLine) observedZenith() (atA, atB s1.Angle) {
	a, b := l.zenith()
	zeta := float64(a) - l.s/l.R/2
	delta := s1.Angle(math.Asin(l.k * math.Sin(zeta) * l.slope() / (2 * l.R)))
	return a - delta, b - delta
}

// randomLine draws a line with its arc log-uniform in [minArc, maxArc]
// metres, heights in [−100, 4000] m, R between the polar and equatorial
// extremes of Euler's radius on GRS80 and k in [0, 0.3].
func randomLine(rng *rand.Rand, minArc, maxArc float64) sphereLine {
	return sphereLine{
		R:  6335439 + rng.Float64()*(6399594-6335439),
		s:  minArc * math.Pow(maxArc/minArc, rng.Float64()),
		hA: -100 + rng.Float64()*4100,
		hB: -100 + rng.Float64()*4100,
		k:  rng.Float64() * 0.3,
	}
}
