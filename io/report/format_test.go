package report

import (
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
)

// appendFixed agrees with strconv's exact decimal rounding except within
// an ulp of a tie, where it may be one unit off in the last place.
func TestAppendFixedMatchesStrconv(t *testing.T) {
	for _, tc := range []struct {
		v    float64
		d    int
		want string
	}{
		{0, 2, "0.00"}, {-0.001, 2, "0.00"}, {-0.006, 2, "-0.01"}, {1.5, 0, "2"}, {-2.5, 0, "-3"},
		{662.661012, 5, "662.66101"}, {0.9996018694123, 10, "0.9996018694"}, {-42.94, 2, "-42.94"},
		{6376056.44, 1, "6376056.4"}, {1e300, 2, strconv.FormatFloat(1e300, 'f', 2, 64)},
	} {
		assert.Equal(t, tc.want, string(appendFixed(nil, tc.v, tc.d)), "%v to %d decimals", tc.v, tc.d)
	}
	rng := rand.New(rand.NewPCG(1, 2))
	for range 100000 {
		d := rng.IntN(11)
		v := (rng.Float64() - 0.5) * math.Pow(10, float64(rng.IntN(12)-3))
		got := string(appendFixed(nil, v, d))
		want := strconv.FormatFloat(v, 'f', d, 64)
		if want == "-"+string(appendFixed(nil, 0, d)) {
			want = want[1:]
		}
		if got != want {
			units := func(s string) int64 {
				n, err := strconv.ParseInt(strings.Replace(s, ".", "", 1), 10, 64)
				assert.NoError(t, err)
				return n
			}
			assert.InDelta(t, units(want), units(got), 1, "%v to %d decimals: %s vs %s, in units of the last place", v, d, got, want)
			x := math.Abs(v * math.Pow10(d))
			assert.InDelta(t, 0.5, x-math.Floor(x), 1e-6, "%v to %d decimals: %s vs %s away from a tie", v, d, got, want)
		}
	}
}

func BenchmarkAppendFixed(b *testing.B) {
	buf := make([]byte, 0, 64)
	v := 662.6610123
	for b.Loop() {
		buf = appendFixed(buf[:0], v, 5)
		v += 1e-3
	}
}
