package report

import (
	"testing"

	"github.com/stretchr/testify/assert"

	"github.com/geored/geored/reduce"
)

// reduced.csv's route tells a horizontal-distance observation from a
// slope distance on either geometry route.
func TestRouteName(t *testing.T) {
	assert.Equal(t, "heights", RouteName(false, reduce.RouteHeights))
	assert.Equal(t, "zenith", RouteName(false, reduce.RouteZenith))
	assert.Equal(t, "horizontal heights", RouteName(true, reduce.RouteHeights))
	assert.Equal(t, "horizontal", RouteName(true, reduce.RouteZenith))
}
